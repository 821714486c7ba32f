import "server-only";
import { getJobByIdAndDerivationId } from "@/db/queries/jobs";
import type { Derivation, Job } from "@/db/schema";
import { env } from "@/lib/env";
import { AppError } from "@/lib/errors";
import { uuidField } from "@/lib/validation/fields";
import { getJobQueue } from "./boss";
import type { FitJobInput, SimulationJobInput } from "./handlers";
import { waitForJob } from "./queue";

/** Time a waiting request allows beyond the job's own limit: a worker to pick it up, derive and store. */
const WAIT_ALLOWANCE_MS = 45_000;

export function queueSimulation({
  derivation,
  userId,
  settings,
}: {
  derivation: Derivation;
  userId: string;
  settings: SimulationJobInput["settings"];
}): Promise<Job> {
  const input: SimulationJobInput = { settings, content: derivation.content };
  return getJobQueue().enqueue({ kind: "simulation", derivationId: derivation.id, userId, input: input as unknown as Record<string, unknown> });
}

export function queueFit({
  derivation,
  userId,
  request,
  apply,
}: {
  derivation: Derivation;
  userId: string;
  request: FitJobInput["request"];
  apply: boolean;
}): Promise<Job> {
  const input: FitJobInput = { request, apply, content: derivation.content, baseUpdatedAt: derivation.updatedAt.toISOString() };
  return getJobQueue().enqueue({ kind: "fit", derivationId: derivation.id, userId, input: input as unknown as Record<string, unknown> });
}

/** Waits (reading the job's row) up to the kind's time limit and the allowance; the job as it then stands. */
export function awaitJob(job: Job): Promise<Job> {
  const limit = job.kind === "fit" ? env.FIT_TIME_LIMIT_MS : env.SIMULATION_TIME_LIMIT_MS;
  return waitForJob(job.id, { timeoutMs: limit + WAIT_ALLOWANCE_MS });
}

/** The job of the derivation with this id, or 404. */
export async function jobOfDerivation(derivationId: string, jobId: string): Promise<Job> {
  const id = uuidField.safeParse(jobId);
  const job = id.success ? await getJobByIdAndDerivationId({ id: id.data, derivationId }) : null;
  if (!job) throw new AppError("not_found:job", "Job not found.");
  return job;
}
