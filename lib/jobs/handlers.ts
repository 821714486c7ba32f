import "server-only";
import { getDerivationById } from "@/db/queries/derivations";
import { getFileByIdAndDerivationId } from "@/db/queries/files";
import type { Derivation, Job, JobKind } from "@/db/schema";
import { AppError } from "@/lib/errors";
import { validDocumentOrThrow } from "@/lib/evaluation/document-content";
import type { LinearizationSettings } from "@/lib/evaluation/evaluate";
import { evaluateDocumentCached } from "@/lib/evaluation/service";
import { QUEUED_ENGINE_TASK_MS, watchedRunner } from "@/lib/evaluation/watched-runner";
import { renderRevisionReport } from "@/lib/reports/service";
import { applyFittedValues } from "@/lib/runs/apply-fit";
import { getEnginePool } from "@/lib/workers/engine-pool";
import { studyBatchJob } from "@/lib/studies/batch";
import { fitToMeasuredFile, runAndStoreSimulation, type FitRequest, type RunSettings } from "@/lib/runs/service";
import type { JobHandler } from "./queue";

/**
 * What each kind of job carries in `jobs.input`: the request as validated by
 * its route and the derivation's content when it was queued (the job runs the
 * model its author saw, whatever is saved meanwhile).
 */
export interface SimulationJobInput {
  settings: RunSettings;
  content: unknown;
}

export interface FitJobInput {
  request: Omit<FitRequest, "file"> & { fileId: string };
  content: unknown;
  /** Write the fitted values to the Parameters cell (the route checked the permission). */
  apply: boolean;
  /** The derivation's `updatedAt` when the fit was asked for: applying refuses a row that moved on. */
  baseUpdatedAt: string;
}

export interface EvaluationJobInput {
  /** The document as posted (unsaved edits included) or stored, validated by the route. */
  document: unknown;
  linearization?: Partial<LinearizationSettings>;
  /** The evaluation cache key the job fills (a second request for it joins this job). */
  modelHash: string;
}

export interface ReportJobInput {
  revisionId: string;
}

/** What a completed report job answers: the stored file, downloaded through GET …/jobs/[jobId]/download. */
export interface ReportJobResult {
  objectKey: string;
  filename: string;
  contentType: string;
  size: number;
}

/** The derivation a job is about, with the content it was queued with. */
async function derivationOf(job: Job, content: unknown): Promise<Derivation> {
  const derivation = await getDerivationById({ id: job.derivationId });
  if (!derivation) throw new AppError("not_found:derivation", "The derivation was deleted before the job ran.");
  return { ...derivation, content: content as Derivation["content"] };
}

export const simulationJob: JobHandler = async (job, { signal, progress }) => {
  const input = job.input as unknown as SimulationJobInput;
  if (!job.createdById) throw new AppError("not_found:job", "The person who queued this job no longer has an account.");
  const run = await runAndStoreSimulation({
    derivation: await derivationOf(job, input.content),
    userId: job.createdById,
    settings: input.settings,
    watch: { signal, onProgress: progress },
  });
  return { runId: run.id };
};

export const fitJob: JobHandler = async (job, { signal, progress }) => {
  const input = job.input as unknown as FitJobInput;
  const derivation = await derivationOf(job, input.content);
  const { fileId, ...request } = input.request;
  const file = await getFileByIdAndDerivationId({ id: fileId, derivationId: derivation.id });
  if (!file) throw new AppError("not_found:file", "File not found.", { fieldErrors: { fileId: ["No such file on this derivation."] } });
  const result = await fitToMeasuredFile({ derivation, request: { ...request, file }, watch: { signal, onProgress: progress } });
  let applied = null;
  if (input.apply) {
    if (!job.createdById) throw new AppError("not_found:job", "The person who queued this job no longer has an account.");
    // The stored row (not the queued content) is what the values are written into.
    const current = await getDerivationById({ id: derivation.id });
    if (!current) throw new AppError("not_found:derivation", "The derivation was deleted before the fit ended.");
    const values = Object.fromEntries(result.fit.parameters.map((p) => [p.name, p.value]));
    applied = await applyFittedValues({ derivation: current, actorId: job.createdById, values, fileId: file.id, baseUpdatedAt: new Date(input.baseUpdatedAt) });
  }
  return { ...result, applied } as unknown as Record<string, unknown>;
};

/**
 * Evaluates a large model in the worker's engine pool; the answer goes to the
 * evaluation cache the request's fast path reads, so the page, asking again,
 * gets it at once. The job's own result is only the key and the timings.
 */
export const evaluationJob: JobHandler = async (job, { signal, progress }) => {
  const input = job.input as unknown as EvaluationJobInput;
  const document = validDocumentOrThrow(input.document);
  const runner = watchedRunner(getEnginePool(), { signal, progress, timeoutMs: QUEUED_ENGINE_TASK_MS });
  const evaluated = await evaluateDocumentCached({ document, linearization: input.linearization, runner });
  return { modelHash: evaluated.modelHash, cached: evaluated.cached, timings: evaluated.timings };
};

/** Renders a revision's report as one HTML file and stores it (lib/reports). */
export const reportJob: JobHandler = async (job, { signal, progress }) => {
  const input = job.input as unknown as ReportJobInput;
  const derivation = await getDerivationById({ id: job.derivationId });
  if (!derivation) throw new AppError("not_found:derivation", "The derivation was deleted before the report was rendered.");
  if (!job.createdById) throw new AppError("not_found:job", "The person who asked for this report no longer has an account.");
  const result: ReportJobResult = await renderRevisionReport({ job, derivation, revisionId: input.revisionId, userId: job.createdById, signal, progress });
  return { ...result };
};

/** The handler of each kind of job; a new kind adds its entry (the compiler asks for it). `study` runs one batch of a parameter study (lib/studies/batch.ts). */
export const JOB_HANDLERS: Record<JobKind, JobHandler> = {
  simulation: simulationJob,
  fit: fitJob,
  evaluation: evaluationJob,
  report: reportJob,
  study: studyBatchJob,
};
