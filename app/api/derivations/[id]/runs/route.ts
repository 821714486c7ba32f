import { getSimulationRunByIdAndDerivationId, getSimulationRunsByDerivationId } from "@/db/queries/runs";
import { derivationRoute } from "@/lib/api/resource-route";
import { readJson } from "@/lib/api/route";
import { AppError } from "@/lib/errors";
import { appErrorOfJob } from "@/lib/jobs/queue";
import { awaitJob, queueSimulation } from "@/lib/jobs/service";
import { jobView, prefersAsync } from "@/lib/jobs/views";
import { trajectoryOfRun } from "@/lib/runs/service";
import { runView } from "@/lib/runs/views";
import { parseOrThrow } from "@/lib/validation/parse";
import { runSettingsSchema } from "./schema";
import { enforceRateLimits, rateLimits } from "@/lib/auth/rate-limit";

type Params = { id: string };

/** Stored runs of the derivation, newest first, without trajectories. */
export const GET = derivationRoute<Params>("derivation:read", async ({ derivation }) => {
  const runs = await getSimulationRunsByDerivationId({ derivationId: derivation.id });
  return Response.json({ runs: runs.map((run) => runView(run)) });
});

/**
 * Queues a simulation for a queue worker (scripts/worker.ts) and stores its run.
 * With `Prefer: respond-async`: 202 with the job, whose progress and answer
 * GET …/jobs/[jobId] reports. Otherwise the request waits for the job: 201
 * with the run and its trajectory, whether it completed or failed part-way
 * (a failed run carries its reason, the time reached and the trajectory up to
 * there); a refusal is the job's error; 202 with the job when it outlasts the wait.
 */
export const POST = derivationRoute<Params>("derivation:simulate", async ({ request, user, derivation }) => {
  await enforceRateLimits(
    [[rateLimits.simulateByUser, user.id]],
    "rate_limited:simulation",
    "Too many simulations in a short time. Wait a moment and try again.",
  );
  const settings = parseOrThrow(runSettingsSchema, await readJson(request));
  const queued = await queueSimulation({ derivation, userId: user.id, settings });
  if (prefersAsync(request)) return Response.json({ job: jobView(queued) }, { status: 202 });
  const job = await awaitJob(queued);
  if (job.state === "queued" || job.state === "running") return Response.json({ job: jobView(job) }, { status: 202 });
  if (job.state !== "completed") throw appErrorOfJob(job);
  const run = await getSimulationRunByIdAndDerivationId({ id: String(job.result?.runId), derivationId: derivation.id });
  if (!run) throw new AppError("not_found:simulation", "The run was not stored.");
  return Response.json({ run: runView({ ...run, createdByName: user.name }, await trajectoryOfRun(run)), job: jobView(job) }, { status: 201 });
});
