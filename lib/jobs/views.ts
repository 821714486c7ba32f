/**
 * What the job routes answer (GET /api/derivations/[id]/jobs/[jobId], its
 * cancel, and the 202 of a queued run or fit). Plain types, safe on the client.
 */
import type { Job, JobError, JobKind, JobState } from "@/db/schema";

export interface JobJson {
  id: string;
  derivationId: string;
  kind: JobKind;
  state: JobState;
  /** Fraction done, 0 … 1. */
  progress: number;
  /** A simulation: `{ runId }`; a fit: the fit's answer (FitJson). */
  result: Record<string, unknown> | null;
  error: JobError | null;
  createdAt: string;
  startedAt: string | null;
  finishedAt: string | null;
}

export function jobView(job: Job): JobJson {
  return {
    id: job.id,
    derivationId: job.derivationId,
    kind: job.kind,
    state: job.state,
    progress: job.progress,
    result: job.result ?? null,
    error: job.error ?? null,
    createdAt: job.createdAt.toISOString(),
    startedAt: job.startedAt?.toISOString() ?? null,
    finishedAt: job.finishedAt?.toISOString() ?? null,
  };
}

/** True when a request asks for the job instead of waiting for its answer (`Prefer: respond-async`, RFC 7240). */
export function prefersAsync(request: Request): boolean {
  return /(^|[,\s])respond-async($|[,;\s])/i.test(request.headers.get("prefer") ?? "");
}
