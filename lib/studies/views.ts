/**
 * What the study routes answer (see the contract in DEVELOPERS.md, "Parameter
 * studies"). Plain types, safe on the client: the notebook's study cell
 * imports `StudyView` and `StudyListItem` from here.
 */
import type { Study, StudyRunStatus, StudyState } from "@/db/schema";
import type { Envelope, PeakSummary, Sensitivity, StudySpec, WatchSpec, WorstCase } from "@/lib/study";

export interface StudyRunView {
  index: number;
  caseName: string;
  parameters: Record<string, number>;
  status: StudyRunStatus;
  failure: { reason: string; message: string } | null;
  peaks: Record<string, PeakSummary>;
  energyDrift: number | null;
  constraintResidual: number | null;
}

export interface StudyListItem {
  id: string;
  cellId: string;
  revisionId: string | null;
  state: StudyState;
  createdAt: string;
  createdBy: { id: string; name: string } | null;
  mode: StudySpec["mode"];
  parameterNames: string[];
  caseNames: string[];
  watch: WatchSpec[];
  progress: { total: number; done: number; failed: number; etaSeconds: number | null };
  /** The whole study failed (not one run). */
  error: { code: string; message: string } | null;
}

export interface StudyView extends StudyListItem {
  runs: StudyRunView[];
  /** Null before the first run completes. */
  envelope: Envelope | null;
  worst: Record<string, WorstCase>;
  sensitivity: Record<string, Sensitivity>;
}

/** Seconds left at the rate runs have finished so far; null before the first run ends or once the study ended. */
export function etaSecondsOf(study: Pick<Study, "state" | "startedAt" | "total" | "done" | "failed">, now = Date.now()): number | null {
  const finished = study.done + study.failed;
  if (study.state !== "running" || !study.startedAt || finished === 0) return null;
  const elapsed = (now - study.startedAt.getTime()) / 1000;
  return Math.max(0, Math.round((elapsed / finished) * (study.total - finished)));
}

export function studyListItem(study: Omit<Study, "content" | "aggregate"> & { createdByName: string | null }, now = Date.now()): StudyListItem {
  return {
    id: study.id,
    cellId: study.cellId,
    revisionId: study.revisionId,
    state: study.state,
    createdAt: study.createdAt.toISOString(),
    createdBy: study.createdById ? { id: study.createdById, name: study.createdByName ?? "" } : null,
    mode: study.mode,
    parameterNames: study.spec.parameters.map((p) => p.name),
    caseNames: study.spec.cases.map((c) => c.name),
    watch: study.spec.watch,
    progress: { total: study.total, done: study.done, failed: study.failed, etaSeconds: etaSecondsOf(study, now) },
    error: study.error ?? null,
  };
}
