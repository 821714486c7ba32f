/**
 * How the derivation report writes numbers, matrices, run settings, modes,
 * checks, parameter studies and plot axes: shared by the report page
 * (components/report) and the report file a queue worker renders
 * (lib/reports/html.ts), so both say the same. Pure: data in, plain text out
 * (each side escapes or typesets it).
 */
import { formatRecordTime } from "@/lib/history/format";
import type { ReportRun, ReportStudy, RevisionReport } from "@/lib/history/views";
import { symbolLatex } from "@/lib/mechanics/browser";
import type { VariedParameter } from "@/lib/study";

export function formatValue(value: number): string {
  if (!Number.isFinite(value)) return String(value);
  if (value === 0) return "0";
  const size = Math.abs(value);
  if (size >= 1e6 || size < 1e-3) return value.toExponential(3);
  return String(Number(value.toPrecision(6)));
}

export function matrixLatex(rows: number[][]): string {
  return `\\begin{bmatrix}${rows.map((row) => row.map(formatValue).join(" & ")).join(" \\\\ ")}\\end{bmatrix}`;
}

export function stateLatex(name: string): string {
  const order = (name.match(/'/g)?.length ?? 0) as 0 | 1 | 2;
  return symbolLatex(name.replace(/'+$/, ""), order);
}

/** Coordinate names from the state names [q; q']. */
export function coordinatesOf(stateNames: readonly string[]): string[] {
  return stateNames.filter((name) => !name.endsWith("'"));
}

/** A stored run's settings as the report's lines (span, initial values, overridden parameters, inputs). */
export function runSettingsText(settings: Record<string, unknown>): string[] {
  const numbers = (value: unknown) =>
    value && typeof value === "object"
      ? Object.entries(value as Record<string, unknown>)
          .map(([name, v]) => `${name} = ${typeof v === "number" ? formatValue(v) : String(v)}`)
          .join(", ")
      : "";
  const lines = [
    `t from ${formatValue(Number(settings.startTime ?? 0))} s to ${formatValue(Number(settings.endTime))} s, output every ${formatValue(Number(settings.outputStep))} s`,
  ];
  const initial = numbers(settings.initialCoordinates);
  if (initial) lines.push(`initial coordinates: ${initial}`);
  const rates = numbers(settings.initialRates);
  if (rates) lines.push(`initial rates: ${rates}`);
  const parameters = numbers(settings.parameters);
  if (parameters) lines.push(`parameters set for this run: ${parameters}`);
  const inputs =
    settings.inputs && typeof settings.inputs === "object"
      ? Object.entries(settings.inputs as Record<string, string>).map(([name, expr]) => `${name}(t) = ${expr}`)
      : [];
  if (inputs.length > 0) lines.push(`inputs: ${inputs.join(", ")}`);
  return lines;
}

/** "name [unit]", or the name alone without a unit. */
export function withUnit(name: string, unit: string | null | undefined): string {
  return unit ? `${name} [${unit}]` : name;
}

/** How a stored run ended, with its energy check when it has one. */
export function runOutcomeText(run: Pick<ReportRun, "status" | "pointCount" | "timeReached" | "failureMessage" | "energyCheck">): string {
  const outcome =
    run.status === "completed"
      ? `Completed: ${run.pointCount} output points.`
      : `Failed at t = ${formatValue(run.timeReached)} s: ${run.failureMessage ?? "no reason recorded"}.`;
  const energy = run.energyCheck
    ? ` Energy function drift ${run.energyCheck.relativeDrift.toExponential(2)} (limit ${run.energyCheck.threshold.toExponential(0)})${run.energyCheck.warning ? ": above the limit." : "."}`
    : "";
  return outcome + energy;
}

/** The sentence under the stored runs about runs of other versions of the model; null when there are none. */
export function otherRunsText(count: number): string | null {
  if (count === 0) return null;
  return `${count} other stored run${count === 1 ? "" : "s"} of this derivation used another version of the model and ${count === 1 ? "is" : "are"} not shown.`;
}

type SelectedLinearization = NonNullable<NonNullable<Extract<RevisionReport["evaluation"], { ok: true }>["result"]["linearization"]>["selected"]>;

/** The head of the modes table. */
export function modeTableHead(selected: Pick<SelectedLinearization, "shapeCoordinates" | "stateNames">): string[] {
  return ["Mode", "Natural frequency [Hz]", "Damped [Hz], ζ", `Shape (${(selected.shapeCoordinates ?? coordinatesOf(selected.stateNames)).join(", ")})`];
}

/** One mode as the cells of the modes table. */
export function modeCells(mode: SelectedLinearization["modes"][number], index: number): string[] {
  return [
    String(index + 1),
    mode.kind === "oscillating" ? formatValue(mode.hertz!) : mode.kind === "rigid" ? "0 (rigid)" : `growing, exp(${formatValue(mode.growthRate!)}·t)`,
    mode.eigenvalue
      ? `${formatValue(mode.eigenvalue.im / (2 * Math.PI))}, ζ = ${formatValue(Number((-mode.eigenvalue.re / Math.hypot(mode.eigenvalue.re, mode.eigenvalue.im)).toPrecision(3)))}`
      : "—",
    mode.shape.map((value) => formatValue(Number(value.toPrecision(3)))).join(", "),
  ];
}

/** The lines of the checks section, each opening with its mark (✓ passed, ✕ failed, – for information). */
export function checkLines(report: Pick<RevisionReport, "evaluation" | "runs">): string[] {
  const { evaluation } = report;
  const selected = evaluation.ok ? evaluation.result.linearization?.selected : undefined;
  const oscillating = selected?.modes.filter((mode) => mode.kind === "oscillating") ?? [];
  const energyRuns = report.runs.filter((run) => run.energyCheck);
  return [
    `${evaluation.ok ? "✓" : "✕"} Units: ${
      evaluation.ok
        ? "every term of every equation has consistent units (checked by the engine while deriving)."
        : `not checked, the model does not derive (${evaluation.message}).`
    }`,
    ...(energyRuns.length > 0
      ? energyRuns.map(
          (run) =>
            `${run.energyCheck!.warning ? "✕" : "✓"} Energy function along run ${report.runs.indexOf(run) + 1}: relative drift ${run.energyCheck!.relativeDrift.toExponential(2)} against the limit ${run.energyCheck!.threshold.toExponential(0)}.`,
        )
      : ["– Energy conservation: no stored run of this revision checks it (it applies to conservative models only)."]),
    ...(selected
      ? [
          `– Small oscillations: ${oscillating.length > 0 ? `${oscillating.map((mode) => `${formatValue(mode.hertz!)} Hz`).join(", ")} about the chosen equilibrium` : "no oscillating mode"}, ${selected.stability} (section 4).`,
        ]
      : []),
    ...(report.runs.some((run) => run.status === "failed") ? ["✕ Simulation: at least one stored run failed (section 6)."] : []),
  ];
}

/** A study's one-line description: mode, what varied, cases, runs, when, and whether it ran on this revision. */
export function studySummaryText(
  study: Pick<ReportStudy, "mode" | "parameters" | "cases" | "total" | "done" | "failed" | "createdAt" | "onThisRevision">,
): string {
  const varied = study.parameters.map((p) => p.name).join(", ") || "the cases";
  const cases = `${study.cases.length} case${study.cases.length === 1 ? "" : "s"} (${study.cases.join(", ")})`;
  return (
    `${study.mode === "grid" ? "Grid" : "Tolerance"} study of ${varied} over ${cases}: ${study.total} runs, ${study.done} done, ${study.failed} failed; ` +
    `${formatRecordTime(study.createdAt)}${study.onThisRevision ? ", on this revision." : ", on other content than this revision's."}`
  );
}

/** How a varied parameter was chosen: its grid values, or its distribution and bounds. */
export function variedParameterText(parameter: VariedParameter): string {
  const unit = parameter.unit ? ` ${parameter.unit}` : "";
  if ("grid" in parameter) {
    const values = parameter.grid;
    if (values.length <= 8) return `grid: ${values.map(formatValue).join(", ")}${unit}`;
    return `grid: ${values.length} values from ${formatValue(values[0]!)} to ${formatValue(values.at(-1)!)}${unit}`;
  }
  if (parameter.distribution === "uniform") return `uniform from ${formatValue(parameter.min)} to ${formatValue(parameter.max)}${unit}`;
  return `normal, mean ${formatValue(parameter.mean)}${unit}, standard deviation ${formatValue(parameter.sd)}${unit}, kept within ${formatValue(parameter.min)} to ${formatValue(parameter.max)}${unit}`;
}

/** "m = 10 kg, l = 2 m" with the study's parameter units. */
export function studyParametersText(values: Record<string, number>, parameters: readonly Pick<VariedParameter, "name" | "unit">[]): string {
  const unitOf = new Map(parameters.map((p) => [p.name, p.unit]));
  return Object.entries(values)
    .map(([name, value]) => `${name} = ${formatValue(value)}${unitOf.get(name) ? ` ${unitOf.get(name)}` : ""}`)
    .join(", ");
}

export interface TextTable {
  head: string[];
  rows: string[][];
}

/** The varied parameters and how each was chosen. */
export function studyParameterTable(study: Pick<ReportStudy, "parameters">): TextTable {
  return { head: ["Parameter", "Values"], rows: study.parameters.map((p) => [withUnit(p.name, p.unit), variedParameterText(p)]) };
}

/** The worst peak of each watched quantity, with the run that reached it. */
export function studyWorstTable(study: Pick<ReportStudy, "worst" | "parameters">): TextTable {
  return {
    head: ["Watched", "Worst peak", "Time [s]", "Case", "Parameters"],
    rows: study.worst.map((w) => [
      withUnit(w.name, w.unit),
      formatValue(w.value),
      formatValue(w.time),
      w.caseName,
      studyParametersText(w.parameters, study.parameters),
    ]),
  };
}

/** Sensitivity of each peak to each varied parameter; null when nothing varied. */
export function studySensitivityTable(study: Pick<ReportStudy, "sensitivity" | "parameters" | "mode">): TextTable | null {
  if (study.parameters.length === 0) return null;
  return {
    head: ["Peak of", ...study.parameters.map((p) => `${p.name}: slope · normalized${study.mode === "tolerance" ? " · r²" : ""}`)],
    rows: study.sensitivity.map((entry) => [
      entry.name,
      ...study.parameters.map((p) => {
        const value = entry.byParameter[p.name];
        if (!value) return "—";
        return [formatValue(value.slope), formatValue(value.normalized), ...(value.r2 === null ? [] : [formatValue(value.r2)])].join(" · ");
      }),
    ]),
  };
}

/** The study's failed runs (the first ones, as the report keeps them) with their reasons; null when none failed. */
export function studyFailedRunsTable(study: Pick<ReportStudy, "failedRuns" | "parameters">): TextTable | null {
  if (study.failedRuns.length === 0) return null;
  return {
    head: ["Run", "Case", "Parameters", "Why it failed"],
    rows: study.failedRuns.map((run) => [String(run.index), run.caseName, studyParametersText(run.parameters, study.parameters), run.message || run.reason]),
  };
}

/** The sentence under a failed-runs table when the report keeps fewer than failed; null otherwise. */
export function studyFailedRunsNote(study: Pick<ReportStudy, "failedRuns" | "failed">): string | null {
  return study.failed > study.failedRuns.length ? `The first ${study.failedRuns.length} of ${study.failed} failed runs are listed.` : null;
}

/** What the study's figures mean. */
export function studyNoteText(study: Pick<ReportStudy, "mode">): string {
  return (
    "Peaks are the largest magnitude of each watched quantity over a run. Sensitivity is of the peak's magnitude: " +
    (study.mode === "grid" ? "finite differences along the grid" : "least squares over the sampled runs, one level per case") +
    "; normalized = slope × parameter spread / peak spread. Failed runs are left out."
  );
}

/** Round steps (1, 2 or 5 × 10^k) covering [min, max] with about `count` intervals. */
export function niceTicks(min: number, max: number, count = 4): number[] {
  if (!Number.isFinite(min) || !Number.isFinite(max)) return [];
  if (min === max) return [min];
  const raw = (max - min) / count;
  const power = 10 ** Math.floor(Math.log10(raw));
  const step = [1, 2, 5, 10].map((m) => m * power).find((candidate) => candidate >= raw) ?? 10 * power;
  const first = Math.ceil(min / step - 1e-9) * step;
  const ticks: number[] = [];
  for (let value = first; value <= max + step * 1e-9; value += step) ticks.push(Math.abs(value) < step * 1e-9 ? 0 : value);
  return ticks;
}

export function tickLabel(value: number): string {
  if (value === 0) return "0";
  const size = Math.abs(value);
  if (size >= 1e5 || size < 1e-3) return value.toExponential(1).replace("e+", "e");
  return String(Number(value.toPrecision(4)));
}

/** The finite range of the values, padded when they are all equal; null when none is finite. */
export function extent(values: readonly number[]): [number, number] | null {
  let low = Infinity;
  let high = -Infinity;
  for (const value of values) {
    if (!Number.isFinite(value)) continue;
    if (value < low) low = value;
    if (value > high) high = value;
  }
  if (low === Infinity) return null;
  if (low === high) {
    const pad = Math.abs(low) > 0 ? Math.abs(low) * 0.1 : 1;
    return [low - pad, high + pad];
  }
  return [low, high];
}

/** The chart's frame in SVG user units (one chart per coordinate, since their units differ). */
export const CHART = { width: 640, height: 150, margin: { left: 58, right: 12, top: 10, bottom: 26 } } as const;

export interface SeriesChartGeometry {
  /** SVG path data of the series; a gap where a value is not finite. */
  path: string;
  xTicks: { value: number; at: number; label: string }[];
  yTicks: { value: number; at: number; label: string }[];
  plot: { x: number; y: number; width: number; height: number };
}

/** Where a series and its axes go in the chart; null when no value is finite. */
export function seriesChartGeometry(times: readonly number[], values: readonly number[]): SeriesChartGeometry | null {
  const xRange = extent(times);
  const yRange = extent(values);
  if (!xRange || !yRange) return null;
  const { width, height, margin } = CHART;
  const plotWidth = width - margin.left - margin.right;
  const plotHeight = height - margin.top - margin.bottom;
  const x = (t: number) => margin.left + ((t - xRange[0]) / (xRange[1] - xRange[0])) * plotWidth;
  const y = (v: number) => margin.top + (1 - (v - yRange[0]) / (yRange[1] - yRange[0])) * plotHeight;
  let path = "";
  let pen = false;
  times.forEach((t, i) => {
    const v = values[i];
    if (v === undefined || !Number.isFinite(v) || !Number.isFinite(t)) {
      pen = false;
      return;
    }
    path += `${pen ? "L" : "M"}${x(t).toFixed(1)} ${y(v).toFixed(1)}`;
    pen = true;
  });
  return {
    path,
    xTicks: niceTicks(xRange[0], xRange[1], 6).map((value) => ({ value, at: x(value), label: tickLabel(value) })),
    yTicks: niceTicks(yRange[0], yRange[1], 3).map((value) => ({ value, at: y(value), label: tickLabel(value) })),
    plot: { x: margin.left, y: margin.top, width: plotWidth, height: plotHeight },
  };
}
