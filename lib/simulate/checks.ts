import { integrate, type NumericAssignment, type SimulationSettings } from "./integrate";
import { SimulationSetupError } from "./errors";
import type { MechanicalSystem } from "./system";

/**
 * Checks a derivation can be put through by running it: the energy function
 * of a conservative system must stay constant, and a small oscillation about
 * an equilibrium must swing at the linearization's natural frequency.
 */

/** Default warning threshold for the relative energy drift. A wrong sign or a missing term gives drift of order 1. */
export const DEFAULT_ENERGY_DRIFT_THRESHOLD = 1e-5;

export interface EnergyDriftReport {
  /** max_k |h_k − h_0| / reference. */
  relativeDrift: number;
  /** max_k |h_k − h_0|, in the energy's unit. */
  maxDeviation: number;
  /** The denominator: max(|h_0|, scale). */
  reference: number;
  threshold: number;
  /** True when the drift exceeds the threshold: the system is not conservative as modelled, or the tolerance is too loose. */
  warning: boolean;
  /** (h_k − h_0) / reference at each point, for a chart. */
  series: Float64Array;
}

/**
 * Relative drift of the energy function along a trajectory. Only meaningful
 * for a conservative system (no dissipation, no applied forces, no explicit
 * time): there the energy function is a constant of the motion.
 *
 * When h_0 is near zero (for example a potential measured from the initial
 * height), pass a `scale` such as the largest kinetic energy so that the
 * ratio stays meaningful.
 *
 * @example energyDrift(result.energy!, { threshold: 1e-6 }).warning
 */
export function energyDrift(energy: ArrayLike<number>, options: { threshold?: number; scale?: number } = {}): EnergyDriftReport {
  const threshold = options.threshold ?? DEFAULT_ENERGY_DRIFT_THRESHOLD;
  if (energy.length === 0) {
    return { relativeDrift: 0, maxDeviation: 0, reference: 0, threshold, warning: false, series: new Float64Array(0) };
  }
  const h0 = energy[0]!;
  const reference = Math.max(Math.abs(h0), options.scale ?? 0, Number.MIN_VALUE);
  const series = new Float64Array(energy.length);
  let maxDeviation = 0;
  for (let k = 0; k < energy.length; k++) {
    const deviation = energy[k]! - h0;
    series[k] = deviation / reference;
    const size = Math.abs(deviation);
    // A NaN energy must show as infinite drift, not vanish in Math.max.
    if (!(size <= maxDeviation)) maxDeviation = Number.isNaN(size) ? Infinity : size;
  }
  const relativeDrift = maxDeviation / reference;
  return { relativeDrift, maxDeviation, reference, threshold, warning: relativeDrift > threshold, series };
}

/**
 * Times at which `values` crosses `level` upwards, located inside each sample
 * interval by the cubic Hermite interpolant when `rates` (the time derivative
 * of `values`) are given, and linearly otherwise.
 */
export function upwardCrossings(times: ArrayLike<number>, values: ArrayLike<number>, rates?: ArrayLike<number>, level = 0): number[] {
  const crossings: number[] = [];
  for (let k = 1; k < times.length; k++) {
    const a = values[k - 1]! - level;
    const b = values[k]! - level;
    if (!(a < 0 && b >= 0)) continue;
    const t0 = times[k - 1]!;
    const h = times[k]! - t0;
    let s = a / (a - b); // linear estimate in [0, 1]
    if (rates) {
      const da = rates[k - 1]! * h;
      const db = rates[k]! * h;
      // Newton on the Hermite cubic p(s) with p(0)=a, p(1)=b, p'(0)=da, p'(1)=db.
      for (let iteration = 0; iteration < 8; iteration++) {
        const s2 = s * s;
        const s3 = s2 * s;
        const p = (2 * s3 - 3 * s2 + 1) * a + (s3 - 2 * s2 + s) * da + (-2 * s3 + 3 * s2) * b + (s3 - s2) * db;
        const dp = (6 * s2 - 6 * s) * a + (3 * s2 - 4 * s + 1) * da + (-6 * s2 + 6 * s) * b + (3 * s2 - 2 * s) * db;
        if (dp === 0) break;
        const next = Math.min(1, Math.max(0, s - p / dp));
        const change = Math.abs(next - s);
        s = next;
        if (change < 1e-15) break;
      }
    }
    crossings.push(t0 + s * h);
  }
  return crossings;
}

export interface PeriodEstimate {
  /** Mean spacing of the upward crossings. */
  period: number;
  /** Number of upward crossings used (at least 2). */
  crossings: number;
  /** Largest deviation of one crossing interval from the mean, relative to the mean (0 for a clean periodic signal). */
  spread: number;
}

/**
 * Period of an oscillating signal from its upward crossings of `level`
 * (default: the signal's mean). Null when fewer than two crossings occur.
 *
 * @example estimatePeriod(tr.times, tr.coordinates[0], tr.rates[0])?.period
 */
export function estimatePeriod(times: ArrayLike<number>, values: ArrayLike<number>, rates?: ArrayLike<number>, level?: number): PeriodEstimate | null {
  let reference = level;
  if (reference === undefined) {
    let sum = 0;
    for (let k = 0; k < values.length; k++) sum += values[k]!;
    reference = values.length > 0 ? sum / values.length : 0;
  }
  const crossings = upwardCrossings(times, values, rates, reference);
  if (crossings.length < 2) return null;
  const period = (crossings[crossings.length - 1]! - crossings[0]!) / (crossings.length - 1);
  let spread = 0;
  for (let i = 1; i < crossings.length; i++) spread = Math.max(spread, Math.abs(crossings[i]! - crossings[i - 1]! - period) / period);
  return { period, crossings: crossings.length, spread };
}

export interface SmallOscillationOptions {
  /** Natural frequency from the linearization, in rad/s. */
  expectedFrequency: number;
  /** The equilibrium about which to swing; default all coordinates 0. */
  equilibrium?: NumericAssignment;
  /**
   * Direction of the initial displacement, one entry per coordinate (the mode
   * shape of the frequency under test). Default: the first coordinate alone,
   * which suits one-coordinate systems; with several coordinates, pass the
   * mode shape or the swing mixes modes and has no single period.
   */
  modeShape?: readonly number[];
  /** Largest initial displacement; default 1e-4 (in the coordinates' units). */
  amplitude?: number;
  /** The coordinate whose crossings are timed; default the one with the largest mode-shape entry. */
  coordinate?: string;
  /** Number of expected periods to simulate; default 10. */
  periods?: number;
  /** Accepted relative frequency error; default 1e-4. */
  tolerance?: number;
  /** Settings passed through to the simulation (parameters, inputs, tolerances, limits). */
  settings?: Pick<SimulationSettings, "parameters" | "inputs" | "relativeTolerance" | "absoluteTolerance" | "timeLimitMs" | "signal">;
}

export interface SmallOscillationReport {
  expectedFrequency: number;
  /** 2π / measured period; null when the run failed or did not oscillate. */
  measuredFrequency: number | null;
  relativeError: number | null;
  passed: boolean;
  coordinate: string;
  amplitude: number;
  /** Why the check could not be made, when it could not. */
  problem: string | null;
}

/**
 * Simulates a small swing about an equilibrium along a mode shape and compares
 * the measured frequency with the linearization's.
 *
 * @example checkSmallOscillation(pendulum, { expectedFrequency: Math.sqrt(9.81 / 0.8) }).passed
 */
export function checkSmallOscillation(system: MechanicalSystem, options: SmallOscillationOptions): SmallOscillationReport {
  const n = system.coordinateNames.length;
  const omega = options.expectedFrequency;
  if (!(omega > 0) || !Number.isFinite(omega)) {
    throw new SimulationSetupError("settings", "expectedFrequency", "the expected frequency must be a positive number (rad/s)");
  }
  const shape = options.modeShape ?? system.coordinateNames.map((_, i) => (i === 0 ? 1 : 0));
  if (shape.length !== n) throw new SimulationSetupError("dimension", "modeShape", `the mode shape needs ${n} entries`);
  const largest = Math.max(...shape.map(Math.abs));
  if (!(largest > 0)) throw new SimulationSetupError("settings", "modeShape", "the mode shape must not be all zero");
  const amplitude = options.amplitude ?? 1e-4;
  const tolerance = options.tolerance ?? 1e-4;
  const periods = options.periods ?? 10;

  const equilibrium = toArray(system.coordinateNames, options.equilibrium ?? {});
  const initial = equilibrium.map((q, i) => q + (amplitude * shape[i]!) / largest);
  const index = options.coordinate === undefined ? shape.findIndex((v) => Math.abs(v) === largest) : system.coordinateNames.indexOf(options.coordinate);
  if (index < 0) throw new SimulationSetupError("unknown_name", "coordinate", `"${options.coordinate}" is not a coordinate`);
  const coordinate = system.coordinateNames[index]!;

  const period = (2 * Math.PI) / omega;
  const result = integrate(system, {
    relativeTolerance: 1e-11,
    absoluteTolerance: amplitude * 1e-10,
    ...options.settings,
    initialCoordinates: initial,
    endTime: periods * period,
    outputStep: period / 100,
  });
  const base = { expectedFrequency: omega, coordinate, amplitude };
  if (result.status === "failed") {
    return { ...base, measuredFrequency: null, relativeError: null, passed: false, problem: `simulation failed: ${result.failure!.message}` };
  }
  const estimate = estimatePeriod(result.trajectory.times, result.trajectory.coordinates[index]!, result.trajectory.rates[index]!, equilibrium[index]!);
  if (estimate === null) {
    return { ...base, measuredFrequency: null, relativeError: null, passed: false, problem: "no oscillation about the equilibrium was seen" };
  }
  const measuredFrequency = (2 * Math.PI) / estimate.period;
  const relativeError = Math.abs(measuredFrequency - omega) / omega;
  return { ...base, measuredFrequency, relativeError, passed: relativeError <= tolerance, problem: null };
}

function toArray(names: readonly string[], given: NumericAssignment): number[] {
  if (Array.isArray(given)) {
    if (given.length !== names.length) throw new SimulationSetupError("dimension", "equilibrium", `expected ${names.length} values`);
    return [...(given as readonly number[])];
  }
  const record = given as Readonly<Record<string, number>>;
  for (const name of Object.keys(record)) {
    if (!names.includes(name)) throw new SimulationSetupError("unknown_name", `equilibrium.${name}`, `"${name}" is not a coordinate`);
  }
  return names.map((name) => record[name] ?? 0);
}
