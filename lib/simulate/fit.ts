import { levenbergMarquardt } from "ml-levenberg-marquardt";
import { EigenvalueDecomposition, Matrix, inverse } from "ml-matrix";
import { FitError } from "./errors";
import { integrate, type CancelSignal, type SimulationSettings } from "./integrate";
import type { MeasuredData } from "./measured";
import type { MechanicalSystem } from "./system";

/**
 * Least-squares fit of chosen parameters (damping, inertia, stiffness, …) to
 * measured trajectories: at each parameter guess the model is simulated and
 * compared with the measurements at the measured times (read from the
 * integrator's dense output, not re-interpolated). Steps come from
 * ml-levenberg-marquardt; we drive it one iteration at a time to control
 * the damping, the stopping test and the time budget.
 */

export interface FitParameter {
  name: string;
  /** Starting value; default the value the simulation would use (settings override, else the model's). */
  initial?: number;
  /** Bounds (e.g. a damping coefficient ≥ 0); default unbounded. */
  min?: number;
  max?: number;
}

export interface FitOptions {
  system: MechanicalSystem;
  measured: MeasuredData;
  parameters: readonly FitParameter[];
  /**
   * Simulation settings other than the time span and output (taken from the
   * measured times). `initialCoordinates` defaults to the first measured row
   * (unmeasured coordinates 0); rates default to 0. Default tolerances 1e-10.
   */
  settings?: Partial<Omit<SimulationSettings, "startTime" | "endTime" | "outputStep" | "outputTimes" | "onProgress" | "signal">>;
  /**
   * Residuals of coordinate c are divided by scales[c] (default 1, i.e. SI
   * units), so coordinates measured in different units can be weighed.
   */
  coordinateScales?: Readonly<Record<string, number>>;
  /** Default 50. */
  maxIterations?: number;
  /** Whole fit, wall clock; default 30 000 ms. */
  timeLimitMs?: number;
  signal?: CancelSignal;
  onProgress?: (progress: FitProgress) => void;
}

export interface FitProgress {
  iteration: number;
  residualRms: number;
  values: Record<string, number>;
}

export interface FittedParameter {
  name: string;
  initial: number;
  value: number;
  /**
   * Standard error from the Jacobian at the optimum, √diag(σ² (JᵀJ)⁻¹) with
   * σ² = SSE / (N − p), over the identifiable parameters (the others held at
   * their values). Assumes independent, equal-variance measurement noise and
   * a model that can describe the data; null when the parameter is not
   * identifiable from these data (see `FitResult.notIdentifiable`) or the fit
   * stopped before the Jacobian could be taken.
   */
  standardError: number | null;
}

/**
 * How the fit ended. `unchanged`: no step from the starting values lowered
 * the misfit, so the values reported are the starting values — never called
 * converged, because nothing was found.
 */
export type FitStatus = "converged" | "unchanged" | "max_iterations" | "time_limit" | "cancelled";

/**
 * Parameters the data cannot determine, and why.
 * - `no_effect`: changing the parameter leaves the measured record unchanged.
 *   `affectsUnmeasured` lists the model's coordinates that do respond (measure
 *   one of them); empty when nothing in this record responds.
 * - `only_together`: a joint change of these parameters leaves the record
 *   unchanged, so only a combination of them is fixed by the data. `direction`
 *   gives that change as relative steps (largest magnitude 1).
 */
export type NotIdentifiable =
  { kind: "no_effect"; parameters: string[]; affectsUnmeasured: string[] } | { kind: "only_together"; parameters: string[]; direction: Record<string, number> };

export interface FitResult {
  status: FitStatus;
  parameters: FittedParameter[];
  /** √(SSE / N) of the scaled residuals (in SI units when no scales are given). */
  residualRms: number;
  /** RMS of simulated − measured per coordinate, in the coordinate's (SI or model) unit. */
  residualRmsByCoordinate: Record<string, number>;
  /** Number of residuals N (rows × measured coordinates). */
  observations: number;
  iterations: number;
  simulations: number;
  /**
   * Parameter covariance σ² (JᵀJ)⁻¹ in the order of `parameters`; rows and
   * columns of parameters that are not identifiable are null. Null as a whole
   * when the fit stopped at a time limit or was cancelled.
   */
  covariance: (number | null)[][] | null;
  /** Parameters the data cannot determine, grouped with the reason; empty when all are determined (or not checked after a time limit). */
  notIdentifiable: NotIdentifiable[];
  /** False when every measured coordinate is constant over the record. */
  recordMoves: boolean;
  /** The fitted model at the measured times, per measured coordinate, for overlay. */
  fitted: { coordinate: string; values: Float64Array }[];
  wallTimeMs: number;
}

/** Stops the optimizer from inside its model function; never escapes this module. */
class StopFit {
  constructor(readonly status: "time_limit" | "cancelled") {}
}

const now: () => number = typeof performance !== "undefined" ? () => performance.now() : () => Date.now();

/**
 * @example
 * const result = fitParameters({
 *   system, measured: parseMeasuredCsv(text, { coordinates }),
 *   parameters: [{ name: "c", min: 0 }, { name: "k", min: 0 }],
 * });
 * result.parameters.map((p) => `${p.name} = ${p.value} ± ${p.standardError}`);
 */
export function fitParameters(options: FitOptions): FitResult {
  const steps = fitSteps(options);
  for (;;) {
    const next = steps.next();
    if (next.done) return next.value;
  }
}

/**
 * The same fit, yielding to the event loop after every iteration so that a
 * worker can receive a cancel message (set `signal.aborted`) meanwhile.
 */
export async function fitParametersInSlices(options: FitOptions): Promise<FitResult> {
  const steps = fitSteps(options);
  for (;;) {
    const next = steps.next();
    if (next.done) return next.value;
    await new Promise<void>((resolve) => setTimeout(resolve, 0));
  }
}

/** The fit as a generator that pauses after each Levenberg–Marquardt iteration. */
function* fitSteps(options: FitOptions): Generator<void, FitResult> {
  const began = now();
  const { system, measured } = options;
  const timeLimitMs = options.timeLimitMs ?? 30_000;
  const maxIterations = options.maxIterations ?? 50;
  const deadline = began + timeLimitMs;
  if (options.parameters.length === 0) throw new FitError("settings", "choose at least one parameter to fit");

  const known = new Map(system.parameters.map((p) => [p.name, p]));
  const baseValues: Record<string, number> = {};
  for (const p of system.parameters) if (p.value !== undefined) baseValues[p.name] = p.value;
  Object.assign(baseValues, options.settings?.parameters ?? {});

  const names = options.parameters.map((p) => p.name);
  const initial = options.parameters.map((p) => {
    if (!known.has(p.name)) throw new FitError("settings", `"${p.name}" is not a parameter of this system`);
    const value = p.initial ?? baseValues[p.name];
    if (value === undefined || !Number.isFinite(value)) throw new FitError("settings", `give a starting value for "${p.name}"`);
    return value;
  });
  if (new Set(names).size !== names.length) throw new FitError("settings", "a parameter is listed twice");
  // Work in scaled parameters x_j = p_j / s_j, so that steps, differences and
  // the damping are comparable across parameters of different magnitudes.
  const scales = initial.map((v) => (v !== 0 ? Math.abs(v) : 1));
  const lower = options.parameters.map((p, j) => (p.min ?? -Infinity) / scales[j]!);
  const upper = options.parameters.map((p, j) => (p.max ?? Infinity) / scales[j]!);
  initial.forEach((v, j) => {
    if (!(v >= lower[j]! * scales[j]! && v <= upper[j]! * scales[j]!))
      throw new FitError("settings", `the starting value of "${names[j]}" lies outside its bounds`);
  });

  const series = measured.series.filter((s) => system.coordinateNames.includes(s.coordinate));
  if (series.length === 0) throw new FitError("no_data", "the measured data contain none of the model's coordinates");
  const rows = measured.times.length;
  const observations = rows * series.length;
  if (observations <= names.length) throw new FitError("too_few_points", `${observations} measurements cannot determine ${names.length} parameters`);
  const seriesIndex = series.map((s) => system.coordinateNames.indexOf(s.coordinate));
  const residualScale = series.map((s) => {
    const scale = options.coordinateScales?.[s.coordinate] ?? 1;
    if (!(scale > 0)) throw new FitError("settings", `the scale of "${s.coordinate}" must be positive`);
    return scale;
  });

  // Measured values, scaled, flattened series by series.
  const target = new Float64Array(observations);
  const spread = series.map((s, c) => {
    let lo = Infinity;
    let hi = -Infinity;
    for (let k = 0; k < rows; k++) {
      const v = s.values[k]! / residualScale[c]!;
      target[c * rows + k] = v;
      lo = Math.min(lo, v);
      hi = Math.max(hi, v);
    }
    return Math.max(hi - lo, 1e-12);
  });

  const firstRow: Record<string, number> = {};
  series.forEach((s) => {
    firstRow[s.coordinate] = s.values[0]!;
  });
  const baseSettings: SimulationSettings = {
    relativeTolerance: 1e-10,
    absoluteTolerance: 1e-10,
    initialCoordinates: firstRow,
    ...options.settings,
    startTime: measured.times[0]!,
    endTime: measured.times[rows - 1]!,
    outputTimes: measured.times,
  };

  let simulations = 0;
  const cache = new Map<string, Float64Array>();
  /** The model at the measured times for scaled parameters x, scaled and flattened. */
  const model = (x: ArrayLike<number>, finalRun = false): Float64Array => {
    const key = Array.from(x, (v) => v.toPrecision(17)).join(",");
    const hit = cache.get(key);
    if (hit) return hit;
    if (!finalRun && options.signal?.aborted) throw new StopFit("cancelled");
    // The last run (the fitted model for the report) gets a short extra budget.
    const remaining = finalRun ? Math.max(deadline - now(), 2000) : deadline - now();
    if (remaining <= 0) throw new StopFit("time_limit");
    const values: Record<string, number> = { ...baseSettings.parameters };
    names.forEach((name, j) => {
      values[name] = x[j]! * scales[j]!;
    });
    simulations++;
    const result = integrate(system, {
      ...baseSettings,
      parameters: values,
      timeLimitMs: Math.min(remaining, baseSettings.timeLimitMs ?? Infinity),
      signal: finalRun ? undefined : options.signal,
    });
    if (!finalRun && result.failure?.reason === "time_limit" && now() >= deadline) throw new StopFit("time_limit");
    if (!finalRun && result.failure?.reason === "cancelled") throw new StopFit("cancelled");
    const out = new Float64Array(observations);
    const reached = result.trajectory.times.length;
    series.forEach((_, c) => {
      const column = result.trajectory.coordinates[seriesIndex[c]!]!;
      for (let k = 0; k < rows; k++) {
        // A guess whose simulation fails (singular M, blow-up) is pushed away
        // by a large, finite misfit where the run did not reach.
        out[c * rows + k] = k < reached ? column[k]! / residualScale[c]! : target[c * rows + k]! + 10 * spread[c]!;
      }
    });
    if (cache.size > 64) cache.clear();
    cache.set(key, out);
    return out;
  };
  const sse = (x: ArrayLike<number>): number => {
    const m = model(x);
    let sum = 0;
    for (let i = 0; i < observations; i++) sum += (m[i]! - target[i]!) ** 2;
    return sum;
  };

  const stepOf = (x: readonly number[]) => x.map((v) => 1e-6 * Math.max(Math.abs(v), 1e-3));
  const data = { x: Array.from({ length: observations }, (_, i) => i), y: Array.from(target) };
  const parameterized = (x: number[]) => {
    const m = model(x);
    return (i: number) => m[i]!;
  };

  let x = initial.map(() => 1);
  let status: FitStatus = "max_iterations";
  let iterations = 0;
  let error: number;
  let damping: number;
  try {
    error = sse(x);
    // Marquardt's start: the damping a thousandth of the largest diagonal of JᵀJ.
    const { jtj } = jacobianAt(x, model, target, stepOf(x));
    damping = Math.max(1e-3 * Math.max(...jtj.diag()), 1e-12);
    while (iterations < maxIterations) {
      if (error === 0) {
        status = "converged";
        break;
      }
      const step = levenbergMarquardt(data, parameterized, {
        initialValues: x,
        minValues: lower,
        maxValues: upper,
        damping,
        gradientDifference: stepOf(x),
        maxIterations: 1,
        errorTolerance: 0,
      });
      iterations++;
      yield;
      const candidate = step.parameterValues;
      const candidateError = step.parameterError;
      if (candidateError < error) {
        const decrease = (error - candidateError) / error;
        const moved = Math.max(...candidate.map((v, j) => Math.abs(v - x[j]!) / Math.max(Math.abs(v), 1e-3)));
        x = candidate;
        error = candidateError;
        damping = Math.max(damping / 9, 1e-15);
        options.onProgress?.({ iteration: iterations, residualRms: Math.sqrt(error / observations), values: valuesOf(x) });
        if (decrease < 1e-10 || moved < 1e-9) {
          status = "converged";
          break;
        }
      } else {
        damping *= 11;
        // No step, however short, lowers the misfit: a minimum to working precision.
        if (damping > 1e12) {
          status = "converged";
          break;
        }
      }
    }
  } catch (stop) {
    if (!(stop instanceof StopFit)) throw stop;
    status = stop.status;
    // Keep the best guess seen so far.
    let best = Infinity;
    for (const [key, m] of cache) {
      let sum = 0;
      for (let i = 0; i < observations; i++) sum += (m[i]! - target[i]!) ** 2;
      if (sum < best) {
        best = sum;
        x = key.split(",").map(Number);
      }
    }
    if (best === Infinity) {
      throw new FitError(
        "simulation_failed",
        status === "cancelled" ? "the fit was cancelled before its first simulation" : "the time limit was reached before the first simulation finished",
      );
    }
  }

  function valuesOf(xs: readonly number[]): Record<string, number> {
    return Object.fromEntries(names.map((name, j) => [name, xs[j]! * scales[j]!]));
  }

  // Nothing moved: no accepted step took the values off their starting point.
  const movedFromStart = x.some((v) => Math.abs(v - 1) > 1e-9);
  if ((status === "converged" || status === "max_iterations") && !movedFromStart) status = "unchanged";

  // Uncertainty and identifiability from central differences at the optimum (skipped when out of time).
  const finalModel = model(x, true);
  let finalSse = 0;
  for (let i = 0; i < observations; i++) finalSse += (finalModel[i]! - target[i]!) ** 2;
  const recordMoves = spread.some((v) => v > 1e-12);
  let covariance: (number | null)[][] | null = null;
  let notIdentifiable: NotIdentifiable[] = [];
  if (status !== "time_limit" && status !== "cancelled") {
    try {
      // Step near the cube root of the integration tolerance: the balance of truncation and integrator noise.
      const step = Math.min(1e-2, Math.max(1e-6, Math.cbrt(baseSettings.relativeTolerance ?? 1e-10)));
      const { jtj, columns } = jacobianAt(
        x,
        model,
        target,
        x.map((v) => step * Math.max(Math.abs(v), 1e-3)),
        true,
      );
      const diagnosis = diagnoseIdentifiability(columns, spread, rows);
      notIdentifiable = diagnosis.groups.map((group) => {
        const parameters = group.indices.map((j) => names[j]!);
        if (group.kind === "only_together") {
          // From steps in scaled parameters to relative changes of the fitted values, largest 1.
          const relative = group.indices.map((j, k) => group.direction[k]! / (x[j]! !== 0 ? x[j]! : 1));
          const largest = Math.max(...relative.map(Math.abs));
          return { kind: "only_together", parameters, direction: Object.fromEntries(group.indices.map((j, k) => [names[j]!, relative[k]! / largest])) };
        }
        return { kind: "no_effect", parameters, affectsUnmeasured: unmeasuredResponse(group.indices) };
      });
      const determined = names.map((_, j) => j).filter((j) => !diagnosis.undetermined.has(j));
      const sigma2 = finalSse / (observations - names.length);
      const inverted = determined.length > 0 ? invertSymmetric(subMatrix(jtj, determined)) : null;
      covariance = names.map(() => names.map(() => null as number | null));
      if (inverted) {
        // Back from scaled parameters: cov(p) = S cov(x) S.
        determined.forEach((i, a) => determined.forEach((j, b) => (covariance![i]![j] = sigma2 * inverted.get(a, b) * scales[i]! * scales[j]!)));
      }
    } catch (stop) {
      if (!(stop instanceof StopFit)) throw stop;
      covariance = null;
      notIdentifiable = [];
    }
  }

  /**
   * Coordinates outside the measured record that respond when the given
   * parameters change by 10 %: measuring one of them would determine them.
   */
  function unmeasuredResponse(indices: readonly number[]): string[] {
    const unmeasured = system.coordinateNames.filter((name) => !series.some((s) => s.coordinate === name));
    if (unmeasured.length === 0) return [];
    const responding = new Set<string>();
    const run = (factor: number) => {
      const values: Record<string, number> = { ...baseSettings.parameters, ...valuesOf(x) };
      for (const j of indices) values[names[j]!] = x[j]! * scales[j]! * factor;
      const remaining = Math.max(deadline - now(), 2000);
      return integrate(system, { ...baseSettings, parameters: values, timeLimitMs: Math.min(remaining, baseSettings.timeLimitMs ?? Infinity) }).trajectory;
    };
    const base = run(1);
    const changed = run(1.1);
    for (const name of unmeasured) {
      const i = system.coordinateNames.indexOf(name);
      const a = base.coordinates[i]!;
      const b = changed.coordinates[i]!;
      const count = Math.min(a.length, b.length);
      let largest = 0;
      let difference = 0;
      for (let k = 0; k < count; k++) {
        largest = Math.max(largest, Math.abs(a[k]!), Math.abs(b[k]!));
        difference = Math.max(difference, Math.abs(a[k]! - b[k]!));
      }
      if (difference > 1e-6 * Math.max(largest, 1e-9)) responding.add(name);
    }
    return [...responding];
  }

  const residualRmsByCoordinate: Record<string, number> = {};
  const fitted = series.map((s, c) => {
    const values = new Float64Array(rows);
    let sum = 0;
    for (let k = 0; k < rows; k++) {
      values[k] = finalModel[c * rows + k]! * residualScale[c]!;
      sum += (values[k]! - s.values[k]!) ** 2;
    }
    residualRmsByCoordinate[s.coordinate] = Math.sqrt(sum / rows);
    return { coordinate: s.coordinate, values };
  });

  return {
    status,
    parameters: names.map((name, j) => {
      const variance = covariance?.[j]?.[j];
      return {
        name,
        initial: initial[j]!,
        value: x[j]! * scales[j]!,
        standardError: variance !== undefined && variance !== null && variance >= 0 ? Math.sqrt(variance) : null,
      };
    }),
    residualRms: Math.sqrt(finalSse / observations),
    residualRmsByCoordinate,
    observations,
    iterations,
    simulations,
    covariance,
    notIdentifiable,
    recordMoves,
    fitted,
    wallTimeMs: now() - began,
  };
}

/** JᵀJ of the residuals by forward (or central) differences. */
function jacobianAt(
  x: readonly number[],
  model: (x: ArrayLike<number>) => Float64Array,
  target: Float64Array,
  steps: readonly number[],
  central = false,
): { jtj: Matrix; columns: Float64Array[] } {
  const p = x.length;
  const n = target.length;
  const base = model(x);
  const columns: Float64Array[] = [];
  for (let j = 0; j < p; j++) {
    const plus = [...x];
    plus[j] = x[j]! + steps[j]!;
    const up = model(plus);
    const column = new Float64Array(n);
    if (central) {
      const minus = [...x];
      minus[j] = x[j]! - steps[j]!;
      const down = model(minus);
      for (let i = 0; i < n; i++) column[i] = (up[i]! - down[i]!) / (2 * steps[j]!);
    } else {
      for (let i = 0; i < n; i++) column[i] = (up[i]! - base[i]!) / steps[j]!;
    }
    columns.push(column);
  }
  const jtj = new Matrix(p, p);
  for (let a = 0; a < p; a++) {
    for (let b = a; b < p; b++) {
      let sum = 0;
      const ca = columns[a]!;
      const cb = columns[b]!;
      for (let i = 0; i < n; i++) sum += ca[i]! * cb[i]!;
      jtj.set(a, b, sum);
      jtj.set(b, a, sum);
    }
  }
  return { jtj, columns };
}

/** Largest ratio of an eigenvalue to the largest one below which a direction counts as not determined. */
const UNDETERMINED_EIGENVALUE_RATIO = 1e-8;
/** A parameter whose doubling moves the record by less than this fraction of its range has no effect on it. */
const NO_EFFECT_SENSITIVITY = 1e-5;

interface IdentifiabilityDiagnosis {
  undetermined: Set<number>;
  groups: ({ kind: "no_effect"; indices: number[] } | { kind: "only_together"; indices: number[]; direction: number[] })[];
}

/**
 * Which scaled parameters the residual Jacobian leaves undetermined: those
 * whose column is negligible next to the data's range (no effect), and the
 * combinations along near-null eigenvectors of the columns' correlation
 * matrix (only together). Columns are series-major, `rows` values per series.
 */
function diagnoseIdentifiability(columns: readonly Float64Array[], spread: readonly number[], rows: number): IdentifiabilityDiagnosis {
  const p = columns.length;
  const undetermined = new Set<number>();
  const groups: IdentifiabilityDiagnosis["groups"] = [];
  // Sensitivity of each series per unit relative change, against that series' range.
  const noEffect: number[] = [];
  for (let j = 0; j < p; j++) {
    const column = columns[j]!;
    let relevant = false;
    spread.forEach((range, c) => {
      let sum = 0;
      for (let k = 0; k < rows; k++) sum += column[c * rows + k]! ** 2;
      if (Math.sqrt(sum / rows) > NO_EFFECT_SENSITIVITY * Math.max(range, 1e-12)) relevant = true;
    });
    if (!relevant) noEffect.push(j);
  }
  if (noEffect.length > 0) {
    groups.push({ kind: "no_effect", indices: noEffect });
    noEffect.forEach((j) => undetermined.add(j));
  }
  const rest = Array.from({ length: p }, (_, j) => j).filter((j) => !undetermined.has(j));
  if (rest.length < 2) return { undetermined, groups };
  const norms = rest.map((j) => Math.hypot(...columns[j]!));
  const correlation = new Matrix(rest.length, rest.length);
  rest.forEach((i, a) =>
    rest.forEach((j, b) => {
      let sum = 0;
      const ci = columns[i]!;
      const cj = columns[j]!;
      for (let k = 0; k < ci.length; k++) sum += ci[k]! * cj[k]!;
      correlation.set(a, b, sum / (norms[a]! * norms[b]!));
    }),
  );
  const decomposition = new EigenvalueDecomposition(correlation, { assumeSymmetric: true });
  const eigenvalues = decomposition.realEigenvalues;
  const largest = Math.max(...eigenvalues);
  const vectors = decomposition.eigenvectorMatrix;
  eigenvalues.forEach((value, e) => {
    if (value > UNDETERMINED_EIGENVALUE_RATIO * largest) return;
    // In correlation form the eigenvector's entries are relative steps divided by each column's norm.
    const raw = rest.map((_, a) => vectors.get(a, e) / norms[a]!);
    const scale = Math.max(...raw.map(Math.abs));
    const members = rest.map((j, a) => ({ j, step: raw[a]! / scale })).filter((m) => Math.abs(m.step) >= 0.05);
    if (members.length === 0) return;
    members.forEach((m) => undetermined.add(m.j));
    groups.push({ kind: "only_together", indices: members.map((m) => m.j), direction: members.map((m) => m.step) });
  });
  return { undetermined, groups };
}

function subMatrix(matrix: Matrix, indices: readonly number[]): Matrix {
  const result = new Matrix(indices.length, indices.length);
  indices.forEach((i, a) => indices.forEach((j, b) => result.set(a, b, matrix.get(i, j))));
  return result;
}

/** (JᵀJ)⁻¹ through its scale-free correlation form, or null when that is singular. */
function invertSymmetric(matrix: Matrix): Matrix | null {
  const diagonal = matrix.diag();
  if (diagonal.some((d) => !(d > 0))) return null;
  const d = diagonal.map((v) => 1 / Math.sqrt(v));
  const correlation = new Matrix(matrix.rows, matrix.columns);
  for (let i = 0; i < matrix.rows; i++) for (let j = 0; j < matrix.columns; j++) correlation.set(i, j, matrix.get(i, j) * d[i]! * d[j]!);
  let inv: Matrix;
  try {
    inv = inverse(correlation);
  } catch {
    return null;
  }
  for (let i = 0; i < inv.rows; i++) for (let j = 0; j < inv.columns; j++) inv.set(i, j, inv.get(i, j) * d[i]! * d[j]!);
  return inv;
}
