/**
 * The numbers of a parameter study, after the cell's text has been read
 * (parse.ts), and what each run and the whole study yield. Plain data: it
 * crosses the worker-thread boundary, goes into PostgreSQL as JSON and out
 * through the API unchanged.
 */

export type WatchKind = "output" | "multiplier" | "coordinate";

/** A watched name: an output of the Outputs cell, a constraint's multiplier, or a coordinate. */
export interface WatchSpec {
  name: string;
  /** The output's or coordinate's unit as typed; a multiplier's comes from the derivation (null until known). */
  unit: string | null;
  kind: WatchKind;
}

/** A parameter varied over a grid (its values in order) or sampled from a distribution. */
export type VariedParameter =
  | { name: string; unit: string | null; grid: number[] }
  | { name: string; unit: string | null; distribution: "uniform"; min: number; max: number }
  | { name: string; unit: string | null; distribution: "normal"; mean: number; sd: number; min: number; max: number };

export interface StudyCaseSpec {
  name: string;
  initialCoordinates: Record<string, number>;
  initialRates: Record<string, number>;
  /** Expressions of t and the parameters, by input name (checked to parse). */
  inputs: Record<string, string>;
}

export interface StudySpec {
  mode: "grid" | "tolerance";
  /** Sampled runs per case (tolerance); the product of the grid's value counts (grid). */
  samples: number;
  /** The sampler's seed (tolerance); 0 for a grid. */
  seed: number;
  parameters: VariedParameter[];
  cases: StudyCaseSpec[];
  startTime: number;
  endTime: number;
  outputStep: number;
  /** Relative tolerance of the integrator. */
  tolerance: number;
  watch: WatchSpec[];
  /** samples × cases. */
  runCount: number;
}

/** One run of a study: which case, which parameter values. */
export interface RunPlan {
  index: number;
  caseIndex: number;
  caseName: string;
  parameters: Record<string, number>;
}

/** Extremes of one watched series over a run. `peak` is the value of largest magnitude, with its sign. */
export interface PeakSummary {
  min: number;
  timeOfMin: number;
  max: number;
  timeOfMax: number;
  peak: number;
  timeOfPeak: number;
}

export interface RunFailure {
  /** The simulator's reason (`singular_mass_matrix`, `time_limit`, …) or `setup` for settings it refused. */
  reason: string;
  message: string;
}

/** What a finished run leaves: its extremes, checks, failure, and its watched series on the study's common grid. */
export interface RunSummary {
  status: "done" | "failed";
  failure: RunFailure | null;
  peaks: Record<string, PeakSummary>;
  /** Relative drift of the energy function; null when the energy is not a constant of the motion. */
  energyDrift: number | null;
  /** Largest |constraint residual| over the run; null without constraints. */
  constraintResidual: number | null;
  /** Watched values at the common grid points (NaN past a failure), in watch order. */
  series: Record<string, number[]>;
  /** Wall time of the integration, ms. */
  wallTimeMs: number;
}

export interface EnvelopeBands {
  min: number[];
  max: number[];
  p5: number[];
  p50: number[];
  p95: number[];
}

export interface Envelope {
  time: number[];
  series: Record<string, EnvelopeBands>;
}

export interface WorstCase {
  runIndex: number;
  value: number;
  time: number;
  caseName: string;
  parameters: Record<string, number>;
}

export interface ParameterSensitivity {
  /** Change of the peak's magnitude per unit of the parameter. */
  slope: number;
  /** slope × (parameter spread) / (peak spread): dimensionless, for ranking. */
  normalized: number;
  /** Regression: the share of the peak's variance (within cases) this parameter explains alone; null for finite differences. */
  r2: number | null;
}

export interface Sensitivity {
  method: "finite-difference" | "regression";
  byParameter: Record<string, ParameterSensitivity>;
}

/** A run as the aggregation reads it. */
export interface FinishedRun extends RunPlan {
  status: "pending" | "done" | "failed";
  peaks: Record<string, PeakSummary>;
}
