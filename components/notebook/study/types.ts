/**
 * What the study routes answer, as the notebook reads it (plain types, safe on
 * the client). The server side builds the same shapes; keep them in step.
 */

export type StudyState = "queued" | "running" | "completed" | "cancelled" | "failed";
export type WatchKind = "output" | "multiplier" | "coordinate";

/** The extremes of one watched name over one run; `peak` is the value of largest magnitude, signed. */
export interface RunPeak {
  min: number;
  timeOfMin: number;
  max: number;
  timeOfMax: number;
  peak: number;
  timeOfPeak: number;
}

export interface StudyRun {
  index: number;
  caseName: string;
  parameters: Record<string, number>;
  status: "pending" | "done" | "failed";
  failure: { reason: string; message: string } | null;
  peaks: Record<string, RunPeak>;
  energyDrift: number | null;
  constraintResidual: number | null;
}

/** Bands over the finished runs; null at a time no finished run reached (runs that stopped early). */
export interface EnvelopeSeries {
  min: (number | null)[];
  max: (number | null)[];
  p5: (number | null)[];
  p50: (number | null)[];
  p95: (number | null)[];
}

export interface StudyWorst {
  runIndex: number;
  value: number;
  time: number;
  caseName: string;
  parameters: Record<string, number>;
}

export interface StudySensitivity {
  method: "finite-difference" | "regression";
  byParameter: Record<string, { slope: number; normalized: number; r2: number | null }>;
}

export interface StudyView {
  id: string;
  cellId: string;
  revisionId: string | null;
  state: StudyState;
  createdAt: string;
  createdBy: { id: string; name: string } | null;
  mode: "grid" | "tolerance";
  parameterNames: string[];
  caseNames: string[];
  watch: Array<{ name: string; unit: string | null; kind: WatchKind }>;
  progress: { total: number; done: number; failed: number; etaSeconds: number | null };
  /** The whole study failed (not one run). */
  error: { code: string; message: string } | null;
  runs: StudyRun[];
  /** Bands over the finished runs on a common time grid; null before the first run ends. */
  envelope: { time: number[]; series: Record<string, EnvelopeSeries> } | null;
  worst: Record<string, StudyWorst>;
  sensitivity: Record<string, StudySensitivity>;
}

export type StudyListItem = Omit<StudyView, "runs" | "envelope" | "worst" | "sensitivity">;

const ENDED: ReadonlySet<StudyState> = new Set(["completed", "cancelled", "failed"]);
export function studyEnded(state: StudyState): boolean {
  return ENDED.has(state);
}
