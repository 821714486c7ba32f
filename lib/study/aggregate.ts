/**
 * What a study says as a whole, from its finished runs: envelope bands over
 * time, the worst case of every watched name, and the sensitivity of each
 * peak to each parameter. Only runs that completed count; a failed run is
 * listed with its reason and left out of every figure here.
 */
import { SingularMatrixError, createLuWorkspace, solveInPlace } from "@/lib/numeric";
import type { Envelope, EnvelopeBands, FinishedRun, ParameterSensitivity, Sensitivity, VariedParameter, WatchSpec, WorstCase } from "./types";

/**
 * The p-quantile of sorted values by linear interpolation between order
 * statistics (Hyndman and Fan's definition 7, the default of R and NumPy).
 *
 * @example quantileOfSorted([1, 2, 3, 4], 0.5) // 2.5
 */
export function quantileOfSorted(sorted: ArrayLike<number>, p: number): number {
  const n = sorted.length;
  if (n === 0) return NaN;
  const h = (n - 1) * p;
  const lower = Math.floor(h);
  const upper = Math.min(n - 1, lower + 1);
  return sorted[lower]! + (h - lower) * (sorted[upper]! - sorted[lower]!);
}

/**
 * Bands over the runs at each time point: min, max, 5th, 50th and 95th
 * percentiles. `series[r][k]` is run r's value at `time[k]`; NaN (a run that
 * stopped early) is left out of that point. A point with no value is null in
 * JSON (NaN here).
 */
export function envelopeOf(time: readonly number[], seriesByName: Record<string, readonly (readonly number[])[]>): Envelope {
  const out: Record<string, EnvelopeBands> = {};
  for (const [name, runs] of Object.entries(seriesByName)) {
    const bands: EnvelopeBands = { min: [], max: [], p5: [], p50: [], p95: [] };
    const column = new Float64Array(runs.length);
    for (let k = 0; k < time.length; k++) {
      let n = 0;
      for (const run of runs) {
        const v = run[k];
        if (typeof v === "number" && Number.isFinite(v)) column[n++] = v;
      }
      const sorted = column.subarray(0, n).sort();
      bands.min.push(n ? sorted[0]! : NaN);
      bands.max.push(n ? sorted[n - 1]! : NaN);
      bands.p5.push(quantileOfSorted(sorted, 0.05));
      bands.p50.push(quantileOfSorted(sorted, 0.5));
      bands.p95.push(quantileOfSorted(sorted, 0.95));
    }
    out[name] = bands;
  }
  return { time: [...time], series: out };
}

/** The completed run of largest |peak| for every watched name (the first such run on a tie). */
export function worstCasesOf(runs: readonly FinishedRun[], watch: readonly Pick<WatchSpec, "name">[]): Record<string, WorstCase> {
  const worst: Record<string, WorstCase> = {};
  for (const { name } of watch) {
    for (const run of runs) {
      if (run.status !== "done") continue;
      const peak = run.peaks[name];
      if (!peak || !Number.isFinite(peak.peak)) continue;
      const best = worst[name];
      if (!best || Math.abs(peak.peak) > Math.abs(best.value)) {
        worst[name] = { runIndex: run.index, value: peak.peak, time: peak.timeOfPeak, caseName: run.caseName, parameters: run.parameters };
      }
    }
  }
  return worst;
}

function spreadOf(values: readonly number[]): number {
  let min = Infinity;
  let max = -Infinity;
  for (const v of values) {
    if (v < min) min = v;
    if (v > max) max = v;
  }
  return values.length ? max - min : 0;
}

function normalized(slope: number, parameterSpread: number, peakSpread: number): number {
  return peakSpread > 0 ? (slope * parameterSpread) / peakSpread : 0;
}

/**
 * Finite differences on a grid: along every line of the grid (the other
 * parameters and the case fixed), the slope of |peak| between neighbouring
 * values of the parameter; the parameter's slope is the mean over all such
 * neighbour pairs whose runs both completed.
 */
export function gridSensitivity(runs: readonly FinishedRun[], parameters: readonly VariedParameter[], name: string): Sensitivity {
  const done = runs.filter((run) => run.status === "done" && run.peaks[name] && Number.isFinite(run.peaks[name]!.peak));
  const peakSpread = spreadOf(done.map((run) => Math.abs(run.peaks[name]!.peak)));
  const byParameter: Record<string, ParameterSensitivity> = {};
  for (const parameter of parameters) {
    if (!("grid" in parameter) || parameter.grid.length < 2) continue;
    const lines = new Map<string, { x: number; y: number }[]>();
    for (const run of done) {
      const key = JSON.stringify([run.caseIndex, ...parameters.filter((p) => p.name !== parameter.name).map((p) => run.parameters[p.name])]);
      const line = lines.get(key) ?? [];
      line.push({ x: run.parameters[parameter.name]!, y: Math.abs(run.peaks[name]!.peak) });
      lines.set(key, line);
    }
    let sum = 0;
    let count = 0;
    for (const line of lines.values()) {
      line.sort((a, b) => a.x - b.x);
      for (let i = 1; i < line.length; i++) {
        sum += (line[i]!.y - line[i - 1]!.y) / (line[i]!.x - line[i - 1]!.x);
        count += 1;
      }
    }
    if (count === 0) continue;
    const slope = sum / count;
    byParameter[parameter.name] = { slope, normalized: normalized(slope, spreadOf(parameter.grid), peakSpread), r2: null };
  }
  return { method: "finite-difference", byParameter };
}

/**
 * Least squares on a tolerance run: |peak| against every sampled parameter
 * together, with one level per case (so a hard and a gentle case do not pass
 * for a parameter effect). Each parameter's r² is the squared correlation of
 * the peak and the parameter after the case means are taken out: the share of
 * the peak's variance within cases that parameter explains alone.
 */
export function regressionSensitivity(runs: readonly FinishedRun[], parameters: readonly VariedParameter[], name: string): Sensitivity {
  const done = runs.filter((run) => run.status === "done" && run.peaks[name] && Number.isFinite(run.peaks[name]!.peak));
  const byParameter: Record<string, ParameterSensitivity> = {};
  const names = parameters.map((p) => p.name);
  if (names.length === 0 || done.length === 0) return { method: "regression", byParameter };

  // Centre the peak and every parameter within each case.
  const byCase = new Map<number, FinishedRun[]>();
  for (const run of done) byCase.set(run.caseIndex, [...(byCase.get(run.caseIndex) ?? []), run]);
  const y: number[] = [];
  const columns: number[][] = names.map(() => []);
  for (const group of byCase.values()) {
    const meanY = group.reduce((s, run) => s + Math.abs(run.peaks[name]!.peak), 0) / group.length;
    const means = names.map((p) => group.reduce((s, run) => s + run.parameters[p]!, 0) / group.length);
    for (const run of group) {
      y.push(Math.abs(run.peaks[name]!.peak) - meanY);
      names.forEach((p, j) => columns[j]!.push(run.parameters[p]! - means[j]!));
    }
  }
  // Centring within cases is the same fit as one intercept per case; the
  // parameters then need more runs than cases plus parameters.
  if (y.length < byCase.size + names.length) return { method: "regression", byParameter };

  // Normal equations on columns scaled to unit root-mean-square, for conditioning.
  const k = names.length;
  const scales = columns.map((column) => Math.sqrt(column.reduce((s, v) => s + v * v, 0) / column.length) || 1);
  const scaled = columns.map((column, j) => column.map((v) => v / scales[j]!));
  const lu = createLuWorkspace(k);
  const rhs = new Float64Array(k);
  for (let a = 0; a < k; a++) {
    for (let b = 0; b < k; b++) lu.matrix[a * k + b] = scaled[a]!.reduce((s, v, i) => s + v * scaled[b]![i]!, 0);
    rhs[a] = scaled[a]!.reduce((s, v, i) => s + v * y[i]!, 0);
  }
  try {
    solveInPlace(lu, rhs);
  } catch (error) {
    // A parameter that did not vary (or two that moved together) leaves no slope to report.
    if (error instanceof SingularMatrixError) return { method: "regression", byParameter };
    throw error;
  }
  const peakSpread = spreadOf(done.map((run) => Math.abs(run.peaks[name]!.peak)));
  const yy = y.reduce((s, v) => s + v * v, 0);
  names.forEach((p, j) => {
    const slope = rhs[j]! / scales[j]!;
    const column = columns[j]!;
    const xx = column.reduce((s, v) => s + v * v, 0);
    const xy = column.reduce((s, v, i) => s + v * y[i]!, 0);
    const r2 = xx > 0 && yy > 0 ? (xy * xy) / (xx * yy) : 0;
    byParameter[p] = { slope, normalized: normalized(slope, spreadOf(done.map((run) => run.parameters[p]!)), peakSpread), r2 };
  });
  return { method: "regression", byParameter };
}

/** Sensitivity of every watched peak: finite differences for a grid, regression for a tolerance run. */
export function sensitivityOf(
  runs: readonly FinishedRun[],
  spec: { mode: "grid" | "tolerance"; parameters: readonly VariedParameter[]; watch: readonly Pick<WatchSpec, "name">[] },
): Record<string, Sensitivity> {
  const out: Record<string, Sensitivity> = {};
  for (const { name } of spec.watch) {
    out[name] = spec.mode === "grid" ? gridSensitivity(runs, spec.parameters, name) : regressionSensitivity(runs, spec.parameters, name);
  }
  return out;
}
