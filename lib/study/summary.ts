/**
 * What one run of a study keeps: the extremes of every watched series at the
 * run's full resolution, the energy drift and constraint residual, why it
 * failed, and the watched series at the study's common grid points (for the
 * envelope). The whole trajectory is dropped: a study of thousands of runs
 * keeps a few kilobytes per run.
 */
import { energyDrift, type SimulationResult } from "@/lib/simulate";
import type { PeakSummary, RunSummary, WatchSpec } from "./types";

/** Most points of a study's envelope (and of each run's stored series). */
export const MAX_ENVELOPE_POINTS = 500;

/**
 * Indices of at most `maxPoints` points of a series of `count`, both ends
 * included, evenly spread (rounded to the nearest index).
 *
 * @example gridIndices(1001, 500)[499] // 1000
 */
export function gridIndices(count: number, maxPoints = MAX_ENVELOPE_POINTS): number[] {
  if (count <= maxPoints) return Array.from({ length: count }, (_, k) => k);
  return Array.from({ length: maxPoints }, (_, i) => Math.round((i * (count - 1)) / (maxPoints - 1)));
}

/**
 * Minimum, maximum and the value of largest magnitude (signed) of a series,
 * each with the first time it occurs; non-finite values are skipped. Null
 * when no value is finite.
 *
 * @example extremesOf([0, 1, 2], [1, -3, 2]) // { min: -3, timeOfMin: 1, max: 2, timeOfMax: 2, peak: -3, timeOfPeak: 1 }
 */
export function extremesOf(times: ArrayLike<number>, values: ArrayLike<number>): PeakSummary | null {
  let found: PeakSummary | null = null;
  for (let k = 0; k < values.length; k++) {
    const v = values[k]!;
    if (!Number.isFinite(v)) continue;
    const t = times[k]!;
    if (found === null) {
      found = { min: v, timeOfMin: t, max: v, timeOfMax: t, peak: v, timeOfPeak: t };
      continue;
    }
    if (v < found.min) {
      found.min = v;
      found.timeOfMin = t;
    }
    if (v > found.max) {
      found.max = v;
      found.timeOfMax = t;
    }
    if (Math.abs(v) > Math.abs(found.peak)) {
      found.peak = v;
      found.timeOfPeak = t;
    }
  }
  return found;
}

/** The series of a watched name in a run, or null when the run does not carry it. */
export function watchedSeries(result: SimulationResult, watch: WatchSpec): ArrayLike<number> | null {
  if (watch.kind === "output") return result.outputs.find((o) => o.name === watch.name)?.values ?? null;
  if (watch.kind === "multiplier") {
    const constraints = result.constraints;
    const index = constraints ? constraints.multiplierNames.indexOf(watch.name) : -1;
    return index >= 0 ? constraints!.multipliers[index]! : null;
  }
  const index = result.trajectory.coordinateNames.indexOf(watch.name);
  return index >= 0 ? result.trajectory.coordinates[index]! : null;
}

/**
 * Summarizes a run for a study. `outputCount` is the number of output times
 * the study asked for; `energyConserved` says whether the model's energy
 * function is a constant of the motion (no damping, forces or explicit time),
 * the only case where its drift means anything.
 */
export function summarizeRun(
  result: SimulationResult,
  watch: readonly WatchSpec[],
  { outputCount, energyConserved }: { outputCount: number; energyConserved: boolean },
): RunSummary {
  const times = result.trajectory.times;
  const peaks: Record<string, PeakSummary> = {};
  const series: Record<string, number[]> = {};
  const indices = gridIndices(outputCount);
  for (const entry of watch) {
    const values = watchedSeries(result, entry);
    const extremes = values ? extremesOf(times, values) : null;
    if (extremes) peaks[entry.name] = extremes;
    // Past a failure the run has fewer points: those grid points are NaN (JSON null once stored).
    series[entry.name] = indices.map((k) => (values && k < values.length && Number.isFinite(values[k]!) ? values[k]! : NaN));
  }
  const energyValid = energyConserved && result.energy !== null && result.energy.length > 0 && !result.constraints?.explicitTime;
  const residuals = result.constraints?.maxResidual ?? null;
  return {
    status: result.status === "completed" ? "done" : "failed",
    failure: result.failure ? { reason: result.failure.reason, message: result.failure.message } : null,
    peaks,
    energyDrift: energyValid ? energyDrift(result.energy!).relativeDrift : null,
    constraintResidual: residuals && residuals.length > 0 ? Math.max(...residuals) : null,
    series,
    wallTimeMs: result.stats.wallTimeMs,
  };
}
