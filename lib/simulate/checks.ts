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
  /** Undamped natural frequency of the mode from the linearization, in rad/s. */
  expectedFrequency: number;
  /**
   * The mode's eigenvalue of the linearized state matrix, when the model has
   * damping: the swing then oscillates at ω_d = |Im λ| and decays at −Re λ, so
   * the simulation is compared with ω_d. Default λ = iω (no damping).
   */
  eigenvalue?: { re: number; im: number };
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
  /** Number of periods to simulate; default 10, fewer for a damped swing (until it has decayed to 10⁻³). */
  periods?: number;
  /** Settings passed through to the simulation (parameters, inputs, tolerances, limits). */
  settings?: Pick<SimulationSettings, "parameters" | "inputs" | "relativeTolerance" | "absoluteTolerance" | "timeLimitMs" | "signal">;
}

export interface SmallOscillationReport {
  /** The linearization's undamped natural frequency, rad/s. */
  expectedFrequency: number;
  /** What the simulation is compared with: the damped frequency |Im λ|, equal to `expectedFrequency` without damping. */
  comparedFrequency: number;
  /** 2π / measured period at `amplitude`; null when the run failed or did not oscillate. */
  measuredFrequency: number | null;
  /** |measured − compared| / compared. */
  relativeError: number | null;
  /**
   * Signed relative frequency change the finite amplitude accounts for,
   * (ω(2A) − ω(A)) / 3ω from a second run at twice the amplitude (the shift
   * grows with amplitude squared); null when that run gave no frequency.
   */
  amplitudeShift: number | null;
  /** Relative frequency error the integration tolerances allow (see INTEGRATION_ERROR_FACTOR). */
  integrationAllowance: number;
  /**
   * Relative error allowed for timing the crossings: a slow offset mixed into
   * the swing (a decaying mode that does not oscillate) separates the upward
   * and downward crossing periods; their mean cancels it to first order, and
   * TIMING_SLACK of the separation is allowed for the rest. 0 for a clean swing.
   */
  timingAllowance: number;
  /**
   * The remainder accepted once the amplitude's share is taken off: twice the
   * integration and timing allowances (two runs) plus the error of the A²
   * extrapolation. Null when not measured.
   */
  allowance: number | null;
  /** Largest relative difference accepted: |amplitudeShift| + allowance; null when not measured. */
  threshold: number | null;
  passed: boolean;
  coordinate: string;
  amplitude: number;
  periods: number;
  /** Why the check could not be made, when it could not. */
  problem: string | null;
}

/**
 * Relative frequency error allowed per unit of integration tolerance. On
 * linear oscillators (k/m from 1 to 10⁶ s⁻², ζ up to 0.1, tolerances 10⁻⁴ to
 * 10⁻¹¹) the measured frequency was off by at most 0.4 × max(rtol, atol/|q|);
 * 10 leaves a margin for stiffer or more strongly coupled systems.
 */
export const INTEGRATION_ERROR_FACTOR = 10;
/** A damped swing is timed until it has decayed to this fraction of its amplitude, so its crossings stay above the absolute tolerance. */
const SMALLEST_DECAY = 1e-3;

/** Fraction of the measured amplitude shift allowed for the error of its A² extrapolation. */
const AMPLITUDE_SHIFT_SLACK = 0.05;

/**
 * Period of a swing about `level` from the mean spacing of its upward and of
 * its downward crossings, averaged. A slowly varying offset (a damped
 * non-oscillating mode mixed in, as when damping couples a free coordinate
 * to the swing) moves the two kinds of crossing in opposite directions, so it
 * cancels to first order; for a clean swing both spacings are the period.
 */
function swingPeriod(
  times: ArrayLike<number>,
  values: ArrayLike<number>,
  rates: ArrayLike<number>,
  level: number,
): { period: number; separation: number } | null {
  const up = estimatePeriod(times, values, rates, level);
  const negated = Float64Array.from(values as ArrayLike<number>, (v) => -v);
  const negatedRates = Float64Array.from(rates as ArrayLike<number>, (v) => -v);
  const down = estimatePeriod(times, negated, negatedRates, -level);
  if (up === null) return null;
  if (down === null) return { period: up.period, separation: 0 };
  const period = (up.period + down.period) / 2;
  return { period, separation: Math.abs(up.period - down.period) / (2 * period) };
}

/** Fraction of the up/down crossing separation allowed after averaging (second order; 0.5 % seen on the demo crane). */
const TIMING_SLACK = 0.05;

/**
 * Simulates a small swing about an equilibrium along a mode shape and compares
 * its frequency with the linearization's (the damped one when the model has
 * damping). The accepted difference is not a fixed number: it is what the
 * amplitude used explains — measured by a second run at twice the amplitude,
 * since for a smooth nonlinearity the frequency shift grows with amplitude
 * squared (for the simple pendulum ω(A)/ω₀ ≈ 1 − A²/16; Landau & Lifshitz,
 * Mechanics, §28) — plus what the integration tolerances allow.
 *
 * @example checkSmallOscillation(pendulum, { expectedFrequency: Math.sqrt(9.81 / 0.8) }).passed
 */
export function checkSmallOscillation(system: MechanicalSystem, options: SmallOscillationOptions): SmallOscillationReport {
  const n = system.coordinateNames.length;
  const omega = options.expectedFrequency;
  if (!(omega > 0) || !Number.isFinite(omega)) {
    throw new SimulationSetupError("settings", "expectedFrequency", "the expected frequency must be a positive number (rad/s)");
  }
  const compared = options.eigenvalue ? Math.abs(options.eigenvalue.im) : omega;
  if (!(compared > 0) || !Number.isFinite(compared)) {
    throw new SimulationSetupError("settings", "eigenvalue", "the mode's eigenvalue has no imaginary part: the mode does not oscillate (overdamped)");
  }
  const decayRate = options.eigenvalue ? Math.max(0, -options.eigenvalue.re) : 0;
  const shape = options.modeShape ?? system.coordinateNames.map((_, i) => (i === 0 ? 1 : 0));
  if (shape.length !== n) throw new SimulationSetupError("dimension", "modeShape", `the mode shape needs ${n} entries`);
  const largest = Math.max(...shape.map(Math.abs));
  if (!(largest > 0)) throw new SimulationSetupError("settings", "modeShape", "the mode shape must not be all zero");
  const amplitude = options.amplitude ?? 1e-4;
  const period = (2 * Math.PI) / compared;
  const periods = options.periods ?? (decayRate > 0 ? Math.min(10, Math.max(2, Math.floor(Math.log(1 / SMALLEST_DECAY) / (decayRate * period)))) : 10);

  const equilibrium = toArray(system.coordinateNames, options.equilibrium ?? {});
  const index = options.coordinate === undefined ? shape.findIndex((v) => Math.abs(v) === largest) : system.coordinateNames.indexOf(options.coordinate);
  if (index < 0) throw new SimulationSetupError("unknown_name", "coordinate", `"${options.coordinate}" is not a coordinate`);
  const coordinate = system.coordinateNames[index]!;
  const relativeTolerance = options.settings?.relativeTolerance ?? 1e-11;
  const absoluteTolerance = options.settings?.absoluteTolerance ?? amplitude * 1e-10;
  // The timed coordinate's swing at the end of the run, against which the absolute tolerance counts.
  const smallestSwing = ((amplitude * Math.abs(shape[index]!)) / largest) * Math.exp(-decayRate * periods * period);
  const integrationAllowance = Math.max(INTEGRATION_ERROR_FACTOR * Math.max(relativeTolerance, absoluteTolerance / smallestSwing), 1e-12);

  const swing = (size: number): { frequency: number; separation: number } | { problem: string } => {
    const result = integrate(system, {
      ...options.settings,
      relativeTolerance,
      absoluteTolerance: (absoluteTolerance * size) / amplitude,
      initialCoordinates: equilibrium.map((q, i) => q + (size * shape[i]!) / largest),
      endTime: periods * period,
      outputStep: period / 100,
    });
    if (result.status === "failed") return { problem: `simulation failed: ${result.failure!.message}` };
    const measured = swingPeriod(result.trajectory.times, result.trajectory.coordinates[index]!, result.trajectory.rates[index]!, equilibrium[index]!);
    return measured === null
      ? { problem: "no oscillation about the equilibrium was seen" }
      : { frequency: (2 * Math.PI) / measured.period, separation: measured.separation };
  };

  const base = { expectedFrequency: omega, comparedFrequency: compared, coordinate, amplitude, periods, integrationAllowance };
  const first = swing(amplitude);
  if ("problem" in first) {
    return {
      ...base,
      measuredFrequency: null,
      relativeError: null,
      amplitudeShift: null,
      timingAllowance: 0,
      allowance: null,
      threshold: null,
      passed: false,
      problem: first.problem,
    };
  }
  const measuredFrequency = first.frequency;
  const difference = (measuredFrequency - compared) / compared;
  const doubled = swing(2 * amplitude);
  // ω(A) = ω₀(1 + cA² + O(A⁴)), so ω(2A) − ω(A) = 3cA²ω₀: the amplitude's share of the difference at A.
  const amplitudeShift = "problem" in doubled ? null : (doubled.frequency - measuredFrequency) / (3 * compared);
  // Left after removing that share: the integration error of both runs, and the O(A⁴) term the
  // two-amplitude estimate misses. For the pendulum's series (A⁴ coefficient 11/3072) that term is
  // 3.7·shift², under 1 % of the shift up to A ≈ 0.2 rad; a decaying swing weights A⁴ more than A²,
  // so AMPLITUDE_SHIFT_SLACK of the shift is allowed.
  const shift = Math.abs(amplitudeShift ?? 0);
  const timingAllowance = TIMING_SLACK * Math.max(first.separation, "problem" in doubled ? 0 : doubled.separation);
  const allowance = 2 * (integrationAllowance + timingAllowance) + Math.max(AMPLITUDE_SHIFT_SLACK * shift, 4 * shift * shift);
  const unexplained = difference - (amplitudeShift ?? 0);
  return {
    ...base,
    measuredFrequency,
    relativeError: Math.abs(difference),
    amplitudeShift,
    timingAllowance,
    allowance,
    threshold: Math.abs(amplitudeShift ?? 0) + allowance,
    passed: Math.abs(unexplained) <= allowance,
    problem: null,
  };
}

/**
 * What a small-oscillation report means, in words: how large the difference
 * is, how much of it the amplitude and the integration tolerance account for,
 * and what the rest says about the linearization.
 *
 * @example explainSmallOscillation(report) // "They agree: the relative difference 6.2e-10 is …"
 */
export function explainSmallOscillation(report: SmallOscillationReport): string {
  const e = (value: number) => value.toExponential(1);
  if (report.problem !== null || report.measuredFrequency === null || report.relativeError === null || report.allowance === null) {
    return `The check could not be made: ${report.problem ?? "no frequency was measured"}.`;
  }
  const damping =
    Math.abs(report.comparedFrequency - report.expectedFrequency) > 1e-12 * report.expectedFrequency
      ? ` Damping slows the swing, so the simulation is compared with the damped frequency ${Number(report.comparedFrequency.toPrecision(6))} rad/s.`
      : "";
  const share =
    report.amplitudeShift === null
      ? "a second run at twice the amplitude gave no frequency, so no share is put down to the amplitude"
      : `the swing of amplitude ${Number(report.amplitude.toPrecision(3))} shifts the frequency by ${e(report.amplitudeShift)} (measured from a second run at twice the amplitude; the shift grows with amplitude squared)`;
  const remaining = Math.abs((report.measuredFrequency - report.comparedFrequency) / report.comparedFrequency - (report.amplitudeShift ?? 0));
  const allowed = `${e(report.allowance)} that the integration tolerance, the timing of the crossings and the amplitude estimate allow`;
  if (report.passed) {
    return `They agree: the relative difference ${e(report.relativeError)} is accounted for — ${share}, and the ${e(remaining)} left is within the ${allowed}. The linearization describes small motions about this equilibrium.${damping}`;
  }
  return `They disagree: of the relative difference ${e(report.relativeError)}, ${share}; the ${e(remaining)} left is more than the ${allowed}. The linearization does not describe small motions of these equations about this point: check the equilibrium, the mode shape and the model.${damping}`;
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
