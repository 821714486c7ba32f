/**
 * How the derivation report writes numbers, matrices, run settings and plot
 * axes: shared by the report page (components/report) and the report file a
 * queue worker renders (lib/reports/html.ts), so both say the same. Pure.
 */
import { symbolLatex } from "@/lib/mechanics/browser";

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
