import "server-only";
import { randomUUID } from "node:crypto";
import { getLatestRevisionByDerivationId } from "@/db/queries/revisions";
import {
  createStudyWithRuns,
  finishStudyById,
  getOpenStudyJobsByStudyId,
  getStudyRunSeriesByStudyId,
  getStudyRunsByStudyId,
  type StudyRunSummary,
} from "@/db/queries/studies";
import type { Derivation, Job, Study, StudyAggregate } from "@/db/schema";
import { env } from "@/lib/env";
import { AppError } from "@/lib/errors";
import { documentFromContent, modelFromDocument } from "@/lib/evaluation/document-content";
import { contentHash } from "@/lib/history/content-hash";
import { getJobQueue } from "@/lib/jobs/boss";
import { queueSimulation } from "@/lib/jobs/service";
import type { StudyCell } from "@/lib/notebook/document";
import { modelHashOf } from "@/lib/runs/service";
import {
  StudySettingsError,
  envelopeOf,
  expandRuns,
  gridIndices,
  outputTimesOf,
  parseStudy,
  sensitivityOf,
  studyCsv,
  worstCasesOf,
  type Envelope,
  type FinishedRun,
  type Sensitivity,
  type StudySpec,
  type WorstCase,
} from "@/lib/study";
import { uuidField } from "@/lib/validation/fields";
import { decodeSeries } from "./series";
import { studyListItem, type StudyRunView, type StudyView } from "./views";

/** Most wall time a batch may take at its runs' time limit: well inside the queue's expiry (15 min). */
const BATCH_BUDGET_MS = 10 * 60_000;
/** Batches a study is split into when it has enough runs, so that many workers share it and the last batch is short. */
const TARGET_BATCHES = 40;
/** Batches of a small study: enough for a few workers to share it, few enough that each batch outlasts the queue's polling. */
const SMALL_STUDY_BATCHES = 4;

/** Wall-clock limit of one run of a study: the server's simulation limit. */
export function studyRunTimeLimitMs(): number {
  return env.SIMULATION_TIME_LIMIT_MS;
}

/**
 * Runs per queue job. pg-boss costs a few database round trips per job and a
 * worker polls again at most every half second, far more than nothing beside a
 * 50 ms run, so runs go in batches: about 40 of them for a large study, 4 for
 * a small one, and never more runs than fit the queue's expiry at their time limit.
 *
 * @example batchSizeOf(1000) // 25
 */
export function batchSizeOf(total: number, runLimitMs = studyRunTimeLimitMs()): number {
  const byBudget = Math.max(1, Math.floor(BATCH_BUDGET_MS / runLimitMs));
  const wanted = Math.max(Math.ceil(total / TARGET_BATCHES), Math.min(8, Math.ceil(total / SMALL_STUDY_BATCHES)));
  return Math.max(1, Math.min(byBudget, wanted));
}

/** The batch jobs' input: which study, which runs (from … to − 1). */
export interface StudyBatchInput {
  studyId: string;
  from: number;
  to: number;
}

function studyCellOf(content: unknown, title: string, cellId: string): StudyCell {
  const document = documentFromContent(content, title);
  const cell = document.cells.find((c) => c.id === cellId);
  if (!cell || cell.kind !== "study")
    throw new AppError("not_found:study", "No study cell with this id in the derivation.", { fieldErrors: { cellId: ["No such study cell."] } });
  return cell;
}

/**
 * Reads the study cell from the derivation's current content, checks it
 * against the model and records the study with all its runs pending (not yet
 * queued). A cell that cannot run is a 400 with its field errors.
 */
export async function recordStudy({ derivation, userId, cellId }: { derivation: Derivation; userId: string; cellId: string }): Promise<Study> {
  const cell = studyCellOf(derivation.content, derivation.title, cellId);
  const model = modelFromDocument(documentFromContent(derivation.content, derivation.title));
  let spec: StudySpec;
  try {
    spec = parseStudy(cell.settings, model);
  } catch (error) {
    if (error instanceof StudySettingsError) throw new AppError("bad_request:study", "The study cannot run as it stands.", { fieldErrors: error.fieldErrors });
    throw error;
  }
  const runs = expandRuns(spec);
  // The revision the study was queued on: the latest one, when it holds exactly this content.
  const latest = await getLatestRevisionByDerivationId({ derivationId: derivation.id });
  const revisionId = latest && latest.contentHash === contentHash(derivation.content) ? latest.id : null;
  return createStudyWithRuns({
    study: {
      id: randomUUID(),
      derivationId: derivation.id,
      cellId,
      revisionId,
      mode: spec.mode,
      settings: cell.settings,
      spec,
      content: derivation.content,
      modelHash: modelHashOf(model),
      total: runs.length,
      createdById: userId,
    },
    runs: runs.map((run) => ({ runIndex: run.index, caseIndex: run.caseIndex, caseName: run.caseName, parameters: run.parameters })),
  });
}

/** Records a study (see `recordStudy`) and queues its batches for the queue workers. */
export async function queueStudy({ derivation, userId, cellId }: { derivation: Derivation; userId: string; cellId: string }): Promise<Study> {
  const study = await recordStudy({ derivation, userId, cellId });
  const size = batchSizeOf(study.total);
  try {
    for (let from = 0; from < study.total; from += size) {
      const input: StudyBatchInput = { studyId: study.id, from, to: Math.min(study.total, from + size) };
      await getJobQueue().enqueue({ kind: "study", derivationId: derivation.id, userId, input: { ...input } });
    }
  } catch (error) {
    await finishStudyById({ id: study.id, state: "failed", error: { code: "unavailable:job", message: "The study could not be queued." } });
    await cancelStudyJobs(study.id);
    throw error;
  }
  return study;
}

async function cancelStudyJobs(studyId: string): Promise<void> {
  const queue = getJobQueue();
  for (const job of await getOpenStudyJobsByStudyId({ studyId })) await queue.cancel(job);
}

/** Stops a study: it says so at once, its waiting batches never start and running ones stop within a second. */
export async function cancelStudy(study: Pick<Study, "id">): Promise<void> {
  await finishStudyById({ id: study.id, state: "cancelled", error: null });
  await cancelStudyJobs(study.id);
}

/** Ends a study that failed as a whole (the model does not derive, say) and stops its other batches. */
export async function failStudy(studyId: string, error: { code: string; message: string }, { except }: { except?: string } = {}): Promise<void> {
  await finishStudyById({ id: studyId, state: "failed", error });
  const queue = getJobQueue();
  for (const job of await getOpenStudyJobsByStudyId({ studyId })) if (job.id !== except) await queue.cancel(job);
}

function finishedRunOf(run: StudyRunSummary): FinishedRun {
  return { index: run.runIndex, caseIndex: run.caseIndex, caseName: run.caseName, parameters: run.parameters, status: run.status, peaks: run.peaks };
}

function runView(run: StudyRunSummary): StudyRunView {
  return {
    index: run.runIndex,
    caseName: run.caseName,
    parameters: run.parameters,
    status: run.status,
    failure: run.status === "failed" ? { reason: run.failureReason ?? "failed", message: run.failureMessage ?? "" } : null,
    peaks: run.peaks,
    energyDrift: run.energyDrift,
    constraintResidual: run.constraintResidual,
  };
}

/** Envelope, worst cases and sensitivity from the study's runs as they stand. */
export async function studyFigures(study: Pick<Study, "id" | "spec">, runs: StudyRunSummary[]): Promise<StudyAggregate & { envelope: Envelope | null }> {
  const { spec } = study;
  const finished = runs.map(finishedRunOf);
  const worst: Record<string, WorstCase> = worstCasesOf(finished, spec.watch);
  const sensitivity: Record<string, Sensitivity> = sensitivityOf(finished, spec);
  const stored = await getStudyRunSeriesByStudyId({ studyId: study.id });
  let envelope: Envelope | null = null;
  if (stored.length > 0) {
    const times = outputTimesOf(spec);
    const indices = gridIndices(times.length);
    const seriesByName: Record<string, number[][]> = Object.fromEntries(spec.watch.map((w) => [w.name, []]));
    for (const row of stored) {
      if (!row.series) continue;
      const decoded = decodeSeries(row.series, spec.watch.length, indices.length);
      spec.watch.forEach((w, i) => seriesByName[w.name]!.push(decoded[i]!));
    }
    envelope = envelopeOf(
      indices.map((k) => times[k]!),
      seriesByName,
    );
  }
  return { envelope, worst, sensitivity };
}

/** The study with its runs and figures (stored once it completed, computed from the runs while it runs). */
export async function studyView(study: Study & { createdByName: string | null }): Promise<StudyView> {
  const runs = await getStudyRunsByStudyId({ studyId: study.id });
  const figures = study.state === "completed" && study.aggregate ? study.aggregate : await studyFigures(study, runs);
  return {
    ...studyListItem(study),
    runs: runs.map(runView),
    envelope: figures.envelope as Envelope | null,
    worst: figures.worst as Record<string, WorstCase>,
    sensitivity: figures.sensitivity as Record<string, Sensitivity>,
  };
}

/** One row per run, with units in the header. */
export async function studyCsvOf(study: Study): Promise<string> {
  const runs = await getStudyRunsByStudyId({ studyId: study.id });
  return studyCsv({ parameters: study.spec.parameters, watch: study.spec.watch, runs: runs.map(runView) });
}

/** The study's id from the path, or 404. */
export function studyIdOf(text: string): string {
  const id = uuidField.safeParse(text);
  if (!id.success) throw new AppError("not_found:study", "Study not found.");
  return id.data;
}

/**
 * Queues an ordinary server simulation of one run of the study: its case,
 * its parameter values and the study's settings, on the content the study ran.
 */
export async function openStudyRun({
  derivation,
  userId,
  study,
  index,
}: {
  derivation: Derivation;
  userId: string;
  study: Study;
  index: number;
}): Promise<Job> {
  const runs = await getStudyRunsByStudyId({ studyId: study.id });
  const run = runs.find((r) => r.runIndex === index);
  if (!run) throw new AppError("not_found:study", "The study has no run with this index.");
  const spec = study.spec;
  const studyCase = spec.cases[run.caseIndex]!;
  return queueSimulation({
    derivation: { ...derivation, content: study.content as Derivation["content"] },
    userId,
    settings: {
      label: `Study run ${index} (${run.caseName})`,
      initialCoordinates: studyCase.initialCoordinates,
      initialRates: studyCase.initialRates,
      startTime: spec.startTime,
      endTime: spec.endTime,
      outputStep: spec.outputStep,
      relativeTolerance: spec.tolerance,
      absoluteTolerance: Math.max(1e-16, spec.tolerance * 1e-2),
      inputs: studyCase.inputs,
      parameters: run.parameters,
    },
  });
}
