import "server-only";
import {
  finishStudyById,
  finishStudyRunByKey,
  getPendingStudyRunsByStudyIdAndRange,
  getStudyById,
  getStudyRunsByStudyId,
  startStudyById,
  updateStudySpecById,
} from "@/db/queries/studies";
import type { Study } from "@/db/schema";
import { AppError, isDatabaseUnavailable } from "@/lib/errors";
import { documentFromContent, modelFromDocument } from "@/lib/evaluation/document-content";
import type { JobHandler } from "@/lib/jobs/queue";
import { EngineLimitError, ExpressionError, ModelError } from "@/lib/mechanics";
import type { RunSummary } from "@/lib/study";
import type { StudyRunTaskInput, StudyRunTaskOutput } from "@/lib/study/task";
import { getSimulationPool } from "@/lib/workers/simulation-pool";
import { encodeSeries } from "./series";
import { failStudy, studyFigures, studyRunTimeLimitMs, type StudyBatchInput } from "./service";

/** Time a worker thread may spend deriving and compiling (the batch's first run) before the run's own clock starts. */
const SETUP_ALLOWANCE_MS = 15_000;

type RunOutcome = { summary: RunSummary; multiplierUnits: Record<string, string> } | { failure: { reason: string; message: string } };

/** A problem of the model itself: every run would meet it, so the whole study fails. */
function isModelProblem(error: unknown): boolean {
  return (
    error instanceof ModelError ||
    error instanceof ExpressionError ||
    (error instanceof EngineLimitError && error.limit !== "time" && error.limit !== "memory" && error.limit !== "cancelled")
  );
}

/**
 * Runs one batch of a study (a `study` job): each pending run of its range in
 * the simulation pool, stored as soon as it ends, so the study shows partial
 * results and a batch delivered again resumes where it stopped. A run that
 * fails (singular, time limit) is stored with its reason and the batch goes on;
 * a model that does not derive fails the study and stops its other batches. The
 * batch that stores the last run completes the study and keeps its figures.
 */
export const studyBatchJob: JobHandler = async (job, { signal, progress, willRetry }) =>
  runStudyBatch({ ...(job.input as unknown as StudyBatchInput), jobId: job.id, signal, progress, willRetry });

export type StudyBatchOptions = StudyBatchInput & {
  /** The batch's own job, left alone when the study fails. */
  jobId?: string;
  signal?: AbortSignal;
  progress?: (fraction: number) => void;
  /** The queue delivers the batch again after an unexpected error (see JobContext.willRetry); false: this is the last attempt. */
  willRetry?: boolean;
};

/**
 * Runs the pending runs of a study from `from` to `to` − 1 in this process's
 * simulation pool (the batch job's body; the demo seed runs a whole study
 * through it).
 *
 * An unexpected error (a database error, a bug: anything but an AppError)
 * goes back to the queue, which delivers the batch again while it has
 * deliveries left; the next attempt resumes at the first pending run. On the
 * last attempt the study fails with a reason people can read and its other
 * batches stop, so it never stays running for good; the runs stored so far
 * are kept.
 */
export async function runStudyBatch(options: StudyBatchOptions): Promise<Record<string, unknown>> {
  try {
    return await runBatch(options);
  } catch (error) {
    if (!(error instanceof AppError) && !options.willRetry) await failStudyAfterError(options, error);
    throw error;
  }
}

/** Ends the study of a batch that met an unexpected error on its last attempt. */
async function failStudyAfterError({ studyId, from, to, jobId }: StudyBatchOptions, error: unknown): Promise<void> {
  console.error(`[holonomy] study ${studyId}: the batch of runs ${from}–${to - 1} failed for good:`, error);
  const cause = isDatabaseUnavailable(error) ? "the database was not reachable" : "the server met an unexpected error";
  const message =
    to - from === 1
      ? `Run ${from} could not be completed: ${cause}. The study was stopped; the runs stored before are kept.`
      : `Runs ${from}–${to - 1} could not be completed: ${cause}. The study was stopped; the runs stored before are kept.`;
  try {
    await failStudy(studyId, { code: "internal:study", message }, { except: jobId });
  } catch (failure) {
    // The database itself refused: nothing more can be written from here.
    console.error(`[holonomy] study ${studyId} could not be marked failed:`, failure);
  }
}

async function runBatch({
  studyId,
  from,
  to,
  jobId,
  signal = new AbortController().signal,
  progress = () => undefined,
}: StudyBatchOptions): Promise<Record<string, unknown>> {
  const input = { studyId, from, to };
  const study = await startStudyById({ id: input.studyId });
  if (!study || study.state !== "running") return { studyId: input.studyId, runs: 0, skipped: true };
  const pending = await getPendingStudyRunsByStudyIdAndRange({ studyId: study.id, from: input.from, to: input.to });
  if (pending.length === 0) {
    await completeIfFinished(study.id);
    return { studyId: study.id, runs: 0 };
  }
  const timeLimitMs = studyRunTimeLimitMs();
  let model: unknown;
  try {
    model = modelFromDocument(documentFromContent(study.content, "Study"));
  } catch (error) {
    const appError = error instanceof AppError ? error : null;
    await failStudy(study.id, { code: appError?.code ?? "unprocessable:model", message: appError?.message ?? "The model cannot be read." }, { except: jobId });
    throw error;
  }
  let spec = study.spec;
  let stored = 0;
  for (const run of pending) {
    if (signal.aborted) break;
    const studyCase = spec.cases[run.caseIndex]!;
    const payload: StudyRunTaskInput = {
      modelKey: study.modelHash,
      model,
      watch: spec.watch,
      settings: {
        initialCoordinates: studyCase.initialCoordinates,
        initialRates: studyCase.initialRates,
        inputs: studyCase.inputs,
        parameters: run.parameters,
        startTime: spec.startTime,
        endTime: spec.endTime,
        outputStep: spec.outputStep,
        tolerance: spec.tolerance,
        timeLimitMs,
      },
    };
    let outcome: RunOutcome;
    // One signal per run, tied to the batch's: the pool leaves its listener on the signal it is given.
    const runSignal = new AbortController();
    const forward = () => runSignal.abort();
    signal.addEventListener("abort", forward, { once: true });
    try {
      const output = await getSimulationPool().run<StudyRunTaskOutput>("studyRun", payload, {
        timeoutMs: timeLimitMs + SETUP_ALLOWANCE_MS,
        signal: runSignal.signal,
      });
      outcome = output.ok
        ? output
        : { failure: { reason: "setup", message: output.error.field ? `${output.error.field}: ${output.error.message}` : output.error.message } };
    } catch (error) {
      if (error instanceof EngineLimitError && error.limit === "cancelled") break;
      if (error instanceof EngineLimitError && error.limit === "time") {
        outcome = { failure: { reason: "time_limit", message: `Stopped after ${Math.round((timeLimitMs + SETUP_ALLOWANCE_MS) / 1000)} s.` } };
      } else if (error instanceof EngineLimitError && error.limit === "memory") {
        outcome = { failure: { reason: "memory", message: "The run ran out of memory and was stopped." } };
      } else if (isModelProblem(error)) {
        await failStudy(study.id, { code: "unprocessable:model", message: error instanceof Error ? error.message : String(error) }, { except: jobId });
        throw new AppError("unprocessable:model", error instanceof Error ? error.message : String(error), { cause: error });
      } else {
        throw error;
      }
    } finally {
      signal.removeEventListener("abort", forward);
    }
    if ("failure" in outcome) {
      await finishStudyRunByKey({
        studyId: study.id,
        runIndex: run.runIndex,
        run: {
          status: "failed",
          failureReason: outcome.failure.reason,
          failureMessage: outcome.failure.message,
          peaks: {},
          energyDrift: null,
          constraintResidual: null,
          series: null,
          wallTimeMs: null,
        },
      });
    } else {
      const { summary, multiplierUnits } = outcome;
      spec = await withMultiplierUnits(study, spec, multiplierUnits);
      const points = Object.values(summary.series)[0]?.length ?? 0;
      await finishStudyRunByKey({
        studyId: study.id,
        runIndex: run.runIndex,
        run: {
          status: summary.status,
          failureReason: summary.failure?.reason ?? null,
          failureMessage: summary.failure?.message ?? null,
          peaks: summary.peaks,
          energyDrift: summary.energyDrift,
          constraintResidual: summary.constraintResidual,
          series: encodeSeries(
            summary.series,
            spec.watch.map((w) => w.name),
            points,
          ),
          wallTimeMs: summary.wallTimeMs,
        },
      });
    }
    stored += 1;
    progress(stored / pending.length);
  }
  if (signal.aborted) throw new AppError("conflict:job", "The study was cancelled.");
  await completeIfFinished(study.id);
  return { studyId: study.id, runs: stored };
}

/** Fills in the units of watched multipliers the first time a worker has derived them. */
async function withMultiplierUnits(study: Study, spec: Study["spec"], units: Record<string, string>): Promise<Study["spec"]> {
  if (!spec.watch.some((w) => w.kind === "multiplier" && w.unit === null && units[w.name])) return spec;
  const next = { ...spec, watch: spec.watch.map((w) => (w.kind === "multiplier" && w.unit === null && units[w.name] ? { ...w, unit: units[w.name]! } : w)) };
  await updateStudySpecById({ id: study.id, spec: next });
  return next;
}

/** Completes the study when no run is pending, keeping its figures; another batch finishing at the same moment changes nothing. */
async function completeIfFinished(studyId: string): Promise<void> {
  const study = await getStudyById({ id: studyId });
  if (!study || study.state !== "running" || study.done + study.failed < study.total) return;
  const runs = await getStudyRunsByStudyId({ studyId });
  await finishStudyById({ id: studyId, state: "completed", aggregate: await studyFigures(study, runs) });
}
