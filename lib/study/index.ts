/**
 * Parameter studies, framework-free: a study cell's settings read into numbers
 * (parse.ts), expanded into runs (sample.ts: grid product or seeded tolerance
 * sampling), each run summarized from its simulation (summary.ts), and the
 * study aggregated (aggregate.ts: envelope bands, worst cases, sensitivity)
 * and written as CSV (csv.ts). No computer algebra behind this entry, so the
 * notebook may import it; the worker's task is `@/lib/study/task`.
 */
export { StudySettingsError } from "./errors";
export { parseStudy, parseGridValues, outputTimesOf, watchableNames, MAX_STUDY_RUN_POINTS, MAX_GRID_VALUES, MIN_NORMAL_SPAN_SD } from "./parse";
export { expandRuns, seededUniform, sampleUniform, sampleTruncatedNormal, standardNormal } from "./sample";
export type { UniformSource } from "./sample";
export { summarizeRun, extremesOf, gridIndices, watchedSeries, MAX_ENVELOPE_POINTS } from "./summary";
export { envelopeOf, worstCasesOf, sensitivityOf, gridSensitivity, regressionSensitivity, quantileOfSorted } from "./aggregate";
export { studyCsv } from "./csv";
export type { CsvRun } from "./csv";
export type {
  WatchKind,
  WatchSpec,
  VariedParameter,
  StudyCaseSpec,
  StudySpec,
  RunPlan,
  PeakSummary,
  RunFailure,
  RunSummary,
  EnvelopeBands,
  Envelope,
  WorstCase,
  ParameterSensitivity,
  Sensitivity,
  FinishedRun,
} from "./types";
