/**
 * Stored form of a simulation's output: plain arrays (JSON in the run's row or
 * in object storage). Pure functions, no I/O; the CSV download is
 * lib/simulate/trajectory-csv.ts.
 */
import type { SimulationResult } from "../simulate";
import type { StoredTrajectory } from "@/db/schema";

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
  };
}

/** Number of stored values (times, coordinates, rates, energy). */
export function valueCount(trajectory: StoredTrajectory): number {
  const columns = 1 + trajectory.coordinates.length + trajectory.rates.length + (trajectory.energy ? 1 : 0);
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
