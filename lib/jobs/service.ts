import "server-only";
import { getActiveJobByModelHash, getJobByIdAndDerivationId } from "@/db/queries/jobs";
import type { Derivation, Job, JobKind, MemberRole } from "@/db/schema";
import { assertCan, type Action } from "@/lib/auth/permissions";
import type { LinearizationSettings } from "@/lib/evaluation/evaluate";
import { cachedDocumentEvaluation, documentEvaluationHash, evaluateDocumentCached, isLargeDocument } from "@/lib/evaluation/service";
import type { EvaluationResponse } from "@/lib/evaluation/views";
import type { DerivationDocument } from "@/lib/notebook/document";
import { env } from "@/lib/env";
import { AppError } from "@/lib/errors";
import { uuidField } from "@/lib/validation/fields";
import { getJobQueue } from "./boss";
import { QUEUED_ENGINE_TASK_MS } from "@/lib/evaluation/watched-runner";
import type { EvaluationJobInput, FitJobInput, ReportJobInput, SimulationJobInput } from "./handlers";
import { appErrorOfJob, waitForJob } from "./queue";
import { jobView } from "./views";

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

/**
 * Queues the evaluation of a large model (the route found no cached answer),
 * or answers the same person's job already queued for the same cache key.
 */
export async function queueEvaluation({
  derivation,
  userId,
  document,
  linearization,
  modelHash,
}: {
  derivation: Derivation;
  userId: string;
  document: DerivationDocument;
  linearization?: Partial<LinearizationSettings>;
  modelHash: string;
}): Promise<Job> {
  const running = await getActiveJobByModelHash({ derivationId: derivation.id, kind: "evaluation", createdById: userId, modelHash });
  if (running) return running;
  const input: EvaluationJobInput = { document, modelHash, ...(linearization ? { linearization } : {}) };
  return getJobQueue().enqueue({ kind: "evaluation", derivationId: derivation.id, userId, input: input as unknown as Record<string, unknown> });
}

/** Queues rendering one revision's report to a stored HTML file. */
export function queueReport({ derivation, userId, revisionId }: { derivation: Derivation; userId: string; revisionId: string }): Promise<Job> {
  const input: ReportJobInput = { revisionId };
  return getJobQueue().enqueue({ kind: "report", derivationId: derivation.id, userId, input: input as unknown as Record<string, unknown> });
}

/** The time a job of each kind may run in its worker (its engine or pool limit). */
function timeLimitMs(kind: JobKind): number {
  const limits: Record<JobKind, number> = {
    simulation: env.SIMULATION_TIME_LIMIT_MS,
    fit: env.FIT_TIME_LIMIT_MS,
    evaluation: QUEUED_ENGINE_TASK_MS,
    report: QUEUED_ENGINE_TASK_MS,
    // A study batch runs many simulations; nothing waits for one on a request (the study's routes poll).
    study: env.SIMULATION_TIME_LIMIT_MS,
  };
  return limits[kind];
}

/**
 * What a caller needs to cancel a job of each kind: what it took to queue one.
 * Anyone who may read the derivation may queue an evaluation or a report, so
 * those jobs are cancelled only by the person who queued them (see `assertMayCancel`).
 */
export const QUEUE_ACTION: Record<JobKind, Action> = {
  simulation: "derivation:simulate",
  fit: "derivation:simulate",
  evaluation: "derivation:read",
  report: "derivation:read",
  study: "derivation:simulate",
};

/** Waits (reading the job's row) up to the kind's time limit and the allowance; the job as it then stands. */
export function awaitJob(job: Job): Promise<Job> {
  return waitForJob(job.id, { timeoutMs: timeLimitMs(job.kind) + WAIT_ALLOWANCE_MS });
}

/** The job of the derivation with this id, or 404. */
export async function jobOfDerivation(derivationId: string, jobId: string): Promise<Job> {
  const id = uuidField.safeParse(jobId);
  const job = id.success ? await getJobByIdAndDerivationId({ id: id.data, derivationId }) : null;
  if (!job) throw new AppError("not_found:job", "Job not found.");
  return job;
}

/**
 * Refuses a cancel the caller may not make: the action that queues the job's
 * kind, and for the kinds every reader may queue (evaluation, report), being
 * the one who queued it — a reader must not stop another person's work.
 */
export function assertMayCancel({ role, userId, derivation, job }: { role: MemberRole; userId: string; derivation: Derivation; job: Job }): void {
  assertCan(role, QUEUE_ACTION[job.kind], { status: derivation.status, locked: derivation.lockedAt !== null, isOwner: derivation.ownerId === userId });
  if (QUEUE_ACTION[job.kind] === "derivation:read" && job.createdById !== userId) {
    throw new AppError("forbidden:job", "Only the person who asked for this job can cancel it.");
  }
}

/**
 * A document's evaluation for a route or page that needs it whole (exports,
 * code, linearization, report and comparison pages): from the cache; on the
 * request for a small model; for a large one, from an evaluation job a queue
 * worker runs — the request waits by reading the job's row (`wait`), or, for a
 * page that should not wait, gets a 503 `unavailable:engine` naming the job,
 * which the page shows as "being evaluated" and the route client may follow.
 */
export async function evaluationForRequest({
  derivation,
  userId,
  document,
  linearization,
  wait = true,
}: {
  derivation: Derivation;
  userId: string;
  document: DerivationDocument;
  linearization?: Partial<LinearizationSettings>;
  wait?: boolean;
}): Promise<EvaluationResponse> {
  const asked = { document, linearization };
  const cached = await cachedDocumentEvaluation(asked);
  if (cached) return cached;
  if (!isLargeDocument(document)) return evaluateDocumentCached(asked);
  const queued = await queueEvaluation({ derivation, userId, ...asked, modelHash: documentEvaluationHash(asked) });
  const job = wait ? await awaitJob(queued) : queued;
  if (job.state === "queued" || job.state === "running") {
    throw new AppError(
      "unavailable:engine",
      "This model is large: a queue worker is evaluating it now. Try again when it is done (the notebook shows its progress).",
      {
        details: { job: jobView(job) },
      },
    );
  }
  if (job.state !== "completed") throw appErrorOfJob(job);
  const evaluated = await cachedDocumentEvaluation(asked);
  if (!evaluated) throw new AppError("internal:engine", "The evaluation completed but its answer was not stored.");
  return evaluated;
}
