/**
 * A study's runs as CSV: one row per run, in index order. Header cells carry
 * units as `name [unit]`, like the trajectory CSV; a failed run keeps its
 * reason and leaves the figures it did not reach empty.
 */
import Papa from "papaparse";
import type { PeakSummary, RunFailure, WatchSpec } from "./types";

export interface CsvRun {
  index: number;
  caseName: string;
  parameters: Record<string, number>;
  status: "pending" | "done" | "failed";
  failure: RunFailure | null;
  peaks: Record<string, PeakSummary>;
  energyDrift: number | null;
  constraintResidual: number | null;
}

const unitOf = (unit: string | null | undefined) => `[${unit?.trim() || "1"}]`;
/** Text a spreadsheet would run as a formula gets a leading apostrophe (OWASP's advice on CSV injection). */
const text = (value: string) => (/^[=+\-@\t\r]/.test(value) ? `'${value}` : value);
const cell = (value: number | null | undefined) => (value === null || value === undefined || !Number.isFinite(value) ? "" : String(value));

/**
 * @example studyCsv({ parameters: [{ name: "l", unit: "m" }], watch: [{ name: "theta", unit: "rad", kind: "coordinate" }], runs })
 * // "run,case,l [m],status,failure,theta peak [rad],theta time of peak [s],…"
 */
export function studyCsv({
  parameters,
  watch,
  runs,
  residualUnit = null,
}: {
  parameters: readonly { name: string; unit: string | null }[];
  watch: readonly WatchSpec[];
  runs: readonly CsvRun[];
  /** The constraints' residual unit when they share one. */
  residualUnit?: string | null;
}): string {
  const header = [
    "run",
    "case",
    ...parameters.map((p) => `${p.name} ${unitOf(p.unit)}`),
    "status",
    "failure",
    ...watch.flatMap((w) => [
      `${w.name} peak ${unitOf(w.unit)}`,
      `${w.name} time of peak [s]`,
      `${w.name} min ${unitOf(w.unit)}`,
      `${w.name} max ${unitOf(w.unit)}`,
    ]),
    "energy drift [1]",
    `constraint residual ${unitOf(residualUnit)}`,
  ];
  const rows = [...runs]
    .sort((a, b) => a.index - b.index)
    .map((run) => [
      String(run.index),
      text(run.caseName),
      ...parameters.map((p) => cell(run.parameters[p.name])),
      run.status,
      run.failure ? text(`${run.failure.reason}: ${run.failure.message}`) : "",
      ...watch.flatMap((w) => {
        const peak = run.peaks[w.name];
        return [cell(peak?.peak), cell(peak?.timeOfPeak), cell(peak?.min), cell(peak?.max)];
      }),
      cell(run.energyDrift),
      cell(run.constraintResidual),
    ]);
  return `${Papa.unparse([header, ...rows], { newline: "\n" })}\n`;
}
