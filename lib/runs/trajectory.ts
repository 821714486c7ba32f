/**
 * Stored form of a simulation's output: plain arrays (JSON in the run's row or
 * in object storage). Pure functions, no I/O; the CSV download is
 * lib/simulate/trajectory-csv.ts.
 */
import type { SimulationResult } from "../simulate";
import type { RunSummary, StoredTrajectory } from "@/db/schema";

/** Trajectories with more values than this go to object storage instead of the row (about 1 MB of JSON). */
export const INLINE_TRAJECTORY_VALUES = 50_000;

export function storedTrajectoryOf(result: SimulationResult): StoredTrajectory {
  const { trajectory } = result;
  return {
    coordinateNames: [...trajectory.coordinateNames],
    times: Array.from(trajectory.times),
    coordinates: trajectory.coordinates.map((column) => Array.from(column)),
    rates: trajectory.rates.map((column) => Array.from(column)),
    energy: result.energy ? Array.from(result.energy) : null,
    outputs: result.outputs.map((o) => ({ name: o.name, unit: o.unit, values: Array.from(o.values), peak: o.peak })),
    constraints: result.constraints
      ? {
          names: [...result.constraints.names],
          multiplierNames: [...result.constraints.multiplierNames],
          multipliers: result.constraints.multipliers.map((column) => Array.from(column)),
          residuals: result.constraints.residuals.map((column) => Array.from(column)),
          rateResiduals: result.constraints.rateResiduals.map((column) => Array.from(column)),
        }
      : null,
  };
}

/** What the results panel shows of the run's constraints beside their series (the series are in the trajectory). */
export function constraintSummaryOf(result: SimulationResult): RunSummary["constraints"] {
  const c = result.constraints;
  if (!c) return null;
  return {
    kinds: [...c.kinds],
    maxResidual: [...c.maxResidual],
    initialProjection: c.initialProjection,
    largestCorrection: c.largestCorrection,
    method: c.method,
    explicitTime: c.explicitTime,
  };
}

/** Number of stored values (times, coordinates, rates, energy, outputs, multipliers and residuals). */
export function valueCount(trajectory: StoredTrajectory): number {
  const c = trajectory.constraints;
  const constraintColumns = c ? c.multipliers.length + c.residuals.length + c.rateResiduals.length : 0;
  const columns =
    1 + trajectory.coordinates.length + trajectory.rates.length + (trajectory.energy ? 1 : 0) + (trajectory.outputs?.length ?? 0) + constraintColumns;
  return columns * trajectory.times.length;
}

/** Every `stride`-th index (and the last), so an overlay stays at most `maxPoints` long. */
export function decimationStride(length: number, maxPoints: number): number {
  return Math.max(1, Math.ceil(length / maxPoints));
}

export function decimate(values: ArrayLike<number>, stride: number): number[] {
  const out: number[] = [];
  for (let i = 0; i < values.length; i += stride) out.push(values[i]!);
  if (values.length > 0 && (values.length - 1) % stride !== 0) out.push(values[values.length - 1]!);
  return out;
}
