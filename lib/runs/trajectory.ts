/**
 * Stored form of a simulation's output: plain arrays (JSON in the run's row or
 * in object storage) and the CSV download. Pure functions, no I/O.
 */
import type { SimulationResult } from "../simulate/integrate";
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

/**
 * The trajectory as CSV, one row per output time: `t [s]`, each coordinate and
 * its rate with units, and the energy function when there is one. Numbers are
 * written in full (shortest round-trip form), so re-reading gives the same values.
 */
export function trajectoryCsv(trajectory: StoredTrajectory, coordinateUnits: Record<string, string> = {}): string {
  const unitOf = (name: string) => coordinateUnits[name]?.trim() || "1";
  const rateUnit = (name: string) => (unitOf(name) === "1" ? "1/s" : `${unitOf(name)}/s`);
  const header = [
    "t [s]",
    ...trajectory.coordinateNames.map((name) => `${name} [${unitOf(name)}]`),
    ...trajectory.coordinateNames.map((name) => `${name}' [${rateUnit(name)}]`),
    ...(trajectory.energy ? ["energy [J]"] : []),
  ];
  const lines = [header.join(",")];
  const cell = (value: number | null | undefined) => (value === null || value === undefined || !Number.isFinite(value) ? "" : String(value));
  for (let k = 0; k < trajectory.times.length; k++) {
    const row = [cell(trajectory.times[k])];
    for (const column of trajectory.coordinates) row.push(cell(column[k]));
    for (const column of trajectory.rates) row.push(cell(column[k]));
    if (trajectory.energy) row.push(cell(trajectory.energy[k]));
    lines.push(row.join(","));
  }
  return `${lines.join("\n")}\n`;
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
