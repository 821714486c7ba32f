import { Outcome, Solver } from "odex";
import { Dop853 } from "./dop853";
import { C as DOP853_NODES } from "./dop853-coefficients";
import { SimulationSetupError, SingularMatrixError } from "./errors";
import { createLuWorkspace, solveInPlace } from "../numeric/linear-solve";
import { ConstraintFailure, ConstraintSet } from "./constraints";
import { compileOutputs, peakOf, type OutputSeries } from "./outputs";
import type { ConstraintKind } from "./specs";
import type { ExpressionEvaluator } from "./system";
import { compileLocated, layoutOf, variableNames, type MechanicalSystem, type SpecializedEvaluators, type VariableLayout } from "./system";

/** The smallest offset c·h of a DOP853 stage from the step's start, as a fraction of h (c₁). */
const SMALLEST_STAGE_OFFSET = Math.min(...Array.from(DOP853_NODES).filter((c) => c > 0));

/** Values given per coordinate: an array in coordinate order, or a record by name (missing names are 0). */
export type NumericAssignment = readonly number[] | Readonly<Record<string, number>>;

/** An input as a function of time, e.g. a motor torque u(t). */
export type InputSignal = (t: number) => number;

/** Anything with an `aborted` flag: an `AbortSignal`, or a plain object the caller flips. */
export interface CancelSignal {
  readonly aborted: boolean;
}

export interface SimulationProgress {
  /** Simulated time reached. */
  time: number;
  /** Fraction of the time span done, 0 … 1. */
  fraction: number;
  rhsEvaluations: number;
  wallTimeMs: number;
}

export interface SimulationSettings {
  initialCoordinates: NumericAssignment;
  /** Initial rates q'(t0); zero when omitted. */
  initialRates?: NumericAssignment;
  /** Default 0. */
  startTime?: number;
  endTime: number;
  /**
   * Spacing of the output grid (dense output of the integrator, so the step
   * the integrator takes is independent of it). The end time is always an
   * output point. Ignored when `outputTimes` is given.
   */
  outputStep?: number;
  /** Explicit, strictly increasing output times inside [startTime, endTime] (used by the fit). */
  outputTimes?: ArrayLike<number>;
  /** Default 1e-8. */
  relativeTolerance?: number;
  /** Default 1e-10. */
  absoluteTolerance?: number;
  /**
   * Inputs by name: an expression of `t` and the parameters (`0.5*sin(2*t)`),
   * compiled from its parsed tree, or a function of time. Inputs not given are 0.
   */
  inputs?: Readonly<Record<string, string | InputSignal>>;
  /** Parameter values replacing the system's defaults; required for symbolic parameters. */
  parameters?: Readonly<Record<string, number>>;
  /** Wall-clock budget; default 10 000 ms. */
  timeLimitMs?: number;
  signal?: CancelSignal;
  onProgress?: (progress: SimulationProgress) => void;
  /** Minimum wall time between progress calls; default 100 ms. */
  progressIntervalMs?: number;
  /** Upper bound on integrator steps (accepted and rejected); default 1 000 000. */
  maxSteps?: number;
  /** Upper bound on output points; default 1 000 000. */
  maxOutputPoints?: number;
  /**
   * The integration method: "extrapolation" (odex, Gragg–Bulirsch–Stoer),
   * "rk853" (DOP853, an embedded Runge–Kutta method of order 8), or "auto"
   * (the default; see `chooseMethod`). Runs stored before the setting existed
   * read as "auto".
   */
  method?: IntegrationMethodSetting;
}

export type IntegrationMethod = "extrapolation" | "rk853";
export type IntegrationMethodSetting = "auto" | IntegrationMethod;
export const INTEGRATION_METHODS: readonly IntegrationMethodSetting[] = ["auto", "extrapolation", "rk853"];

export type SimulationFailureReason =
  "step_size_underflow" | "singular_mass_matrix" | "singular_constraints" | "time_limit" | "cancelled" | "non_finite_state" | "max_steps";

export interface SimulationFailure {
  reason: SimulationFailureReason;
  message: string;
  /** The last time the integrator reached with an accepted step. */
  timeReached: number;
  /** The constraint at fault, for `singular_constraints`. */
  constraint?: string | null;
}

/** What the projection of the initial state onto the constraints changed. */
export interface InitialProjection {
  /** Every coordinate the projection moved: as given, and as the run started. */
  coordinates: { name: string; given: number; projected: number }[];
  rates: { name: string; given: number; projected: number }[];
  /** Each constraint's residual at the state as given (g_k, or the rate residual of a rate constraint). */
  residuals: { name: string; kind: ConstraintKind; given: number }[];
}

/** How the run held the constraints. */
export interface ConstraintReport {
  names: string[];
  kinds: ConstraintKind[];
  /** `lambda_<name>` or `mu_<name>`, per constraint. */
  multiplierNames: string[];
  /** The multiplier of each constraint at every output point (a generalized force per unit of the constraint). */
  multipliers: Float64Array[];
  /** Each constraint's residual at every output point: g_k, or A_k q' + a_k0 for a rate constraint. */
  residuals: Float64Array[];
  /** Each position constraint's rate-level residual A_k q' + a_k0 at every output point (rate constraints repeat their residual). */
  rateResiduals: Float64Array[];
  /** max |residual| per constraint over the run. */
  maxResidual: number[];
  /** Null when the given initial state met the constraints. */
  initialProjection: InitialProjection | null;
  /** The largest correction one projection made during the run (the drift the integrator left between output times). */
  largestCorrection: { coordinates: number; rates: number };
  /** How the constraints are held, in words, for the results panel. */
  method: string;
  /** True when a constraint names t: the constraint forces then do work and the energy function is no constant of the motion. */
  explicitTime: boolean;
}

/** Output on the grid, one column per coordinate and per rate (ready for charts). */
export interface Trajectory {
  coordinateNames: readonly string[];
  times: Float64Array;
  /** coordinates[i][k] = q_i(times[k]). */
  coordinates: Float64Array[];
  /** rates[i][k] = q_i'(times[k]). */
  rates: Float64Array[];
}

export interface SimulationStats {
  rhsEvaluations: number;
  acceptedSteps: number;
  wallTimeMs: number;
  /** The tolerances the integrator stepped with: the requested ones × the method's factor (STEP_TOLERANCE_FACTORS). */
  stepTolerance: { relative: number; absolute: number };
  /** The method that ran ("auto" resolved). */
  method: IntegrationMethod;
}

export interface SimulationResult {
  status: "completed" | "failed";
  /** Null when completed. A failed run keeps the trajectory up to `failure.timeReached`. */
  failure: SimulationFailure | null;
  timeReached: number;
  trajectory: Trajectory;
  /** The energy function at every output point, when the system has one. */
  energy: Float64Array | null;
  /** The parameter values the run used (defaults with overrides applied). */
  parameterValues: Record<string, number>;
  stats: SimulationStats;
  /** Null for a system without constraints. */
  constraints: ConstraintReport | null;
  /** The system's outputs at every output point, with their peaks; empty when it has none. */
  outputs: OutputSeries[];
}

/** How the integrator holds constraints (shown with the results). */
export const CONSTRAINT_METHOD =
  "index reduction (q'' and the multipliers solved together at every step), with the state projected back onto the position and rate constraints at every output time";

const DEFAULTS = {
  relativeTolerance: 1e-8,
  absoluteTolerance: 1e-10,
  timeLimitMs: 10_000,
  progressIntervalMs: 100,
  maxSteps: 1_000_000,
  maxOutputPoints: 1_000_000,
};

/**
 * The requested tolerances apply to every output point, and most output points
 * are interpolated: odex's dense-output error control admits about ten times
 * the tolerance between step ends, and on the double pendulum at 1e-10 we
 * measured energy errors of up to 7e-8 on the grid while the step ends stayed
 * at 2e-9. Stepping at 1/100 of the requested tolerance brought the grid to
 * ≤ 6e-10 over 36 perturbed runs, for about 40 % more right-hand-side
 * evaluations. (A lower interpolation degree, MUDIF = 5, was as accurate but
 * let the step size stall at 1e-17 s when a run starts from exact rest.)
 */
export const STEP_TOLERANCE_FACTOR = 0.01;

/**
 * The same for each method. Both step at 1/100 of the requested tolerance, so
 * a run's stored step tolerance means the same whichever method ran; DOP853
 * then needs fewer evaluations than odex and keeps the double pendulum's grid
 * energy drift lower (6e-11 against 2e-10 at 1e-10; scripts/bench-simulate.ts).
 */
export const STEP_TOLERANCE_FACTORS: Readonly<Record<IntegrationMethod, number>> = { extrapolation: STEP_TOLERANCE_FACTOR, rk853: 0.01 };

/**
 * The method "auto" picks: whichever needed fewer right-hand sides in our
 * measurements. On the double pendulum over 20 s DOP853 needed 4 751 / 9 189 /
 * 15 588 / 24 855 / 39 567 evaluations at 1e-4 / 1e-6 / 1e-8 / 1e-10 / 1e-12,
 * extrapolation 8 182 / 12 963 / 20 272 / 28 456 / 40 361, with lower energy
 * drift for DOP853 at each: DOP853 wherever the settings allow (down to 1e-12);
 * extrapolation, whose order grows with the demand, only beyond that.
 */
export function chooseMethod(setting: IntegrationMethodSetting | undefined, relativeTolerance: number): IntegrationMethod {
  if (setting === "extrapolation" || setting === "rk853") return setting;
  return relativeTolerance >= AUTO_RK853_BELOW ? "rk853" : "extrapolation";
}
const AUTO_RK853_BELOW = 1e-12;

/** Thrown inside odex's callbacks to stop it; never escapes this module. */
class StopIntegration {
  constructor(
    readonly reason: SimulationFailureReason,
    readonly message: string,
    readonly constraint: string | null = null,
  ) {}
}

/** Positions are projected until every |g_k| is below this, relative to 1 + max |q|. */
const PROJECTION_TOLERANCE = 1e-12;
/** A state whose constraints cannot be brought below this (relative to 1 + max |q|) is refused. */
const CONSISTENCY_TOLERANCE = 1e-8;
/** A given initial state counts as meeting its constraints when every residual is below this (relative). */
const MET_TOLERANCE = 1e-10;

const now: () => number = typeof performance !== "undefined" ? () => performance.now() : () => Date.now();

/**
 * Integrates M(q) q'' = f(q, q', t, u) as the first-order system x = [q; q']
 * with odex (Gragg–Bulirsch–Stoer extrapolation, dense output), solving for
 * q'' by LU with partial pivoting at every right-hand-side evaluation.
 *
 * Never throws for a numerical failure: the result says why it stopped, when,
 * and keeps the trajectory up to there. Bad settings throw `SimulationSetupError`.
 *
 * @example
 * const result = integrate(system, { initialCoordinates: { theta: 0.5 }, endTime: 10, outputStep: 0.01 });
 * if (result.status === "failed") console.log(result.failure.reason, result.failure.timeReached);
 */
export function integrate(system: MechanicalSystem, settings: SimulationSettings): SimulationResult {
  const run = new IntegrationRun(system, settings);
  run.advance(run.endTime);
  return run.finish();
}

/**
 * The same integration in slices of about `sliceMs` wall time, yielding to the
 * event loop between slices so that a worker can receive a cancel message.
 * Each slice ends on an output time and restarts the integrator there with the
 * last step size; results agree with `integrate` to the tolerance.
 */
export async function integrateInSlices(system: MechanicalSystem, settings: SimulationSettings, sliceMs = 30): Promise<SimulationResult> {
  const run = new IntegrationRun(system, settings);
  // Start with a short slice; later slices are sized from the measured speed.
  let sliceSpan = (run.endTime - run.startTime) / 10_000;
  while (run.canContinue()) {
    const began = now();
    const target = run.outputTimeAtOrAfter(run.timeReached + sliceSpan);
    run.advance(target);
    const spentMs = Math.max(now() - began, 0.1);
    // Aim the next slice at sliceMs, growing at most fourfold.
    sliceSpan = Math.min(sliceSpan * 4, (sliceSpan * sliceMs) / spentMs);
    await new Promise<void>((resolve) => setTimeout(resolve, 0));
  }
  return run.finish();
}

/** One integration: setup, then one or more `advance` calls, then `finish`. */
class IntegrationRun {
  readonly startTime: number;
  readonly endTime: number;
  timeReached: number;

  private readonly system: MechanicalSystem;
  private readonly layout: VariableLayout;
  private readonly values: Float64Array;
  private readonly parameterValues: Record<string, number>;
  private readonly writeInputs: (t: number) => void;
  private readonly outputTimes: Float64Array;
  private readonly columns: Float64Array[];
  private readonly method: IntegrationMethod;
  private readonly solver: Solver | Dop853;
  private readonly rhs: (t: number, y: ArrayLike<number>, dydt: Float64Array | number[]) => void;
  private readonly onStep: (step: number, xOld: number, x: number, y: ArrayLike<number>, dense?: (c: number, x: number) => number) => void;
  private readonly began: number;
  private readonly energy: ((values: Float64Array) => number) | undefined;
  private readonly constraintSet: ConstraintSet | null;
  private readonly outputEvaluator: ExpressionEvaluator | null;
  private readonly evaluateMassForcing: (values: Float64Array, out: Float64Array) => void;
  private initialProjection: InitialProjection | null = null;
  private readonly largestCorrection = { coordinates: 0, rates: 0 };

  private state: ArrayLike<number>;
  private filled = 0;
  private rhsEvaluations = 0;
  private acceptedSteps = 0;
  private lastStepSize = 0;
  private failure: SimulationFailure | null = null;
  private done = false;

  constructor(system: MechanicalSystem, settings: SimulationSettings) {
    this.began = now();
    this.system = system;
    const layout = layoutOf(system);
    this.layout = layout;
    const { n } = layout;

    const startTime = settings.startTime ?? 0;
    const endTime = settings.endTime;
    if (!Number.isFinite(startTime)) throw new SimulationSetupError("settings", "startTime", "the start time must be a finite number");
    if (!Number.isFinite(endTime) || !(endTime > startTime)) {
      throw new SimulationSetupError("settings", "endTime", "the end time must be a finite number after the start time");
    }
    this.startTime = startTime;
    this.endTime = endTime;
    this.timeReached = startTime;

    const relativeTolerance = settings.relativeTolerance ?? DEFAULTS.relativeTolerance;
    const absoluteTolerance = settings.absoluteTolerance ?? DEFAULTS.absoluteTolerance;
    if (!(relativeTolerance >= 1e-12 && relativeTolerance <= 0.1)) {
      throw new SimulationSetupError("settings", "relativeTolerance", "the relative tolerance must lie between 1e-12 and 0.1");
    }
    if (!(absoluteTolerance > 0 && absoluteTolerance <= 1)) {
      throw new SimulationSetupError("settings", "absoluteTolerance", "the absolute tolerance must lie in (0, 1]");
    }
    const timeLimitMs = settings.timeLimitMs ?? DEFAULTS.timeLimitMs;
    if (!(timeLimitMs > 0)) throw new SimulationSetupError("settings", "timeLimitMs", "the time limit must be positive");
    const maxSteps = settings.maxSteps ?? DEFAULTS.maxSteps;
    if (!(Number.isInteger(maxSteps) && maxSteps > 0)) throw new SimulationSetupError("settings", "maxSteps", "the step limit must be a positive integer");

    this.outputTimes = buildOutputTimes(settings, startTime, endTime, settings.maxOutputPoints ?? DEFAULTS.maxOutputPoints);

    // Packed variables [q, q', t, u, p]; parameters are written once here.
    const values = new Float64Array(layout.length);
    this.values = values;
    this.parameterValues = resolveParameters(system, settings.parameters);
    system.parameters.forEach((p, i) => {
      values[layout.parameters + i] = this.parameterValues[p.name]!;
    });
    this.writeInputs = compileInputs(system, layout, values, settings.inputs, this.parameterValues);

    const q0 = assign(system.coordinateNames, settings.initialCoordinates, "initialCoordinates");
    const rates0 = settings.initialRates === undefined ? new Array<number>(n).fill(0) : assign(system.coordinateNames, settings.initialRates, "initialRates");
    this.state = [...q0, ...rates0];
    this.constraintSet =
      system.constraints && system.constraints.length > 0 ? new ConstraintSet(system.constraints, system.coordinateNames, variableNames(system)) : null;
    this.outputEvaluator = compileOutputs(system, this.constraintSet?.multiplierNames ?? []);

    this.columns = Array.from({ length: 2 * n }, () => new Float64Array(this.outputTimes.length));

    if (settings.method !== undefined && !INTEGRATION_METHODS.includes(settings.method)) {
      throw new SimulationSetupError("settings", "method", `the method must be one of ${INTEGRATION_METHODS.join(", ")}`);
    }
    const method = chooseMethod(settings.method, relativeTolerance);
    this.method = method;
    const factor = STEP_TOLERANCE_FACTORS[method];
    const specialized: SpecializedEvaluators = system.specialize
      ? system.specialize(this.parameterValues)
      : { massForcing: system.massForcing, ...(system.energy ? { energy: system.energy } : {}) };
    // DOP853 without constraints runs whole steps in a WebAssembly module generated for this system, when it has one.
    const acquired = method === "rk853" && this.constraintSet === null && specialized.acquireStepKernel ? specialized.acquireStepKernel() : null;
    const stepKernel = acquired?.kernel ?? null;
    if (acquired !== null) this.releaseStepKernel = acquired.release;
    if (method === "extrapolation") {
      const solver = new Solver(2 * n);
      solver.denseOutput = true;
      solver.relativeTolerance = relativeTolerance * factor;
      solver.absoluteTolerance = absoluteTolerance * factor;
      solver.maxSteps = maxSteps;
      this.solver = solver;
    } else {
      const solver = new Dop853(2 * n, stepKernel);
      solver.relativeTolerance = relativeTolerance * factor;
      solver.absoluteTolerance = absoluteTolerance * factor;
      solver.maxSteps = maxSteps;
      this.solver = solver;
    }

    // ---- the right-hand side: the hot path, no allocation ----
    this.energy = specialized.energy;
    const massForcing = specialized.massForcing;
    this.evaluateMassForcing = massForcing;
    const constraintSet = this.constraintSet;
    const multipliers = new Float64Array(constraintSet?.m ?? 0);
    const nn = n * n;
    const mf = new Float64Array(nn + n);
    const lu = createLuWorkspace(n);
    const matrix = lu.matrix;
    const acc = new Float64Array(n);
    const writeInputs = this.writeInputs;
    const timeSlot = layout.time;
    const inputSlot = layout.inputs;
    const inputCount = layout.m;
    // Without constraints the right-hand side needs only M and f: it writes the state straight into the
    // WebAssembly module's memory when the system offers one (the constrained solve reads the packed vector).
    const kernel = this.constraintSet === null ? specialized.massForcingKernel : undefined;
    const deadline = this.began + timeLimitMs;
    const signal = settings.signal;
    const span = endTime - startTime;
    // A stage this close to the last accepted time means the step size has
    // collapsed to roundoff: t + h can no longer be told from t (the smallest
    // GBS stage is h/34 with 9 columns). Not relative to the span: started
    // from exact rest, odex's stability check legitimately shrinks the first
    // steps to 1e-20 s and then grows them back.
    const tinyOffset = (t: number) => 16 * Number.EPSILON * Math.abs(t);
    let callsThisSolve = 0;

    this.rhs = (t, y, derivative) => {
      const count = ++this.rhsEvaluations;
      if ((count & 127) === 0) {
        if (now() > deadline) throw new StopIntegration("time_limit", `the time limit of ${timeLimitMs} ms was reached`);
        if (signal?.aborted) throw new StopIntegration("cancelled", "the simulation was cancelled");
      }
      if (++callsThisSolve > 1 && t - this.timeReached <= tinyOffset(t)) {
        throw new StopIntegration("step_size_underflow", `the step size fell to roundoff level near t = ${formatTime(this.timeReached)}`);
      }
      let source: Float64Array = mf;
      if (kernel !== undefined) {
        // The module reads [q, q', t, u] from its own memory and leaves M and f there: no copies between.
        const input = kernel.input;
        for (let i = 0; i < 2 * n; i++) input[i] = y[i]!;
        input[timeSlot] = t;
        if (inputCount > 0) {
          writeInputs(t);
          for (let k = 0; k < inputCount; k++) input[inputSlot + k] = values[inputSlot + k]!;
        }
        kernel.run();
        source = kernel.output;
      } else {
        for (let i = 0; i < 2 * n; i++) values[i] = y[i]!;
        values[timeSlot] = t;
        writeInputs(t);
        massForcing(values, mf);
      }
      if (constraintSet) {
        try {
          constraintSet.solveAugmented(values, mf, acc, multipliers);
        } catch (error) {
          if (error instanceof ConstraintFailure) throw new StopIntegration(error.reason, `${error.message} (t = ${formatTime(t)})`, error.constraint);
          throw error;
        }
      } else
        try {
          for (let i = 0; i < nn; i++) matrix[i] = source[i]!;
          for (let i = 0; i < n; i++) acc[i] = source[nn + i]!;
          solveInPlace(lu, acc);
        } catch (error) {
          if (error instanceof SingularMatrixError) {
            if (error.nonFinite) throw new StopIntegration("non_finite_state", `the mass matrix is not finite at t = ${formatTime(t)}`);
            throw new StopIntegration("singular_mass_matrix", `the mass matrix is singular at t = ${formatTime(t)} (${error.message})`);
          }
          throw error;
        }
      for (let i = 0; i < n; i++) {
        const a = acc[i]!;
        // NaN or ±Infinity: a - a is not 0.
        if (a - a !== 0)
          throw new StopIntegration("non_finite_state", `the acceleration of ${system.coordinateNames[i]} is not finite at t = ${formatTime(t)}`);
        derivative[i] = y[n + i]!;
        derivative[n + i] = a;
      }
    };

    // ---- after each accepted step: dense output onto the grid, limits, progress ----
    const outputTimes = this.outputTimes;
    const columns = this.columns;
    const onProgress = settings.onProgress;
    const progressIntervalMs = settings.progressIntervalMs ?? DEFAULTS.progressIntervalMs;
    let lastProgress = this.began;

    this.onStep = (_nr, xOld, x, y, dense) => {
      const slack = 8 * Number.EPSILON * Math.max(Math.abs(x), span);
      for (let i = 0; i < 2 * n; i++) {
        const v = y[i]!;
        if (v - v !== 0) throw new StopIntegration("non_finite_state", `the state became non-finite near t = ${formatTime(x)}`);
      }
      let k = this.filled;
      while (k < outputTimes.length && outputTimes[k]! <= x + slack) {
        const tk = outputTimes[k]!;
        if (dense === undefined || tk >= x) {
          for (let c = 0; c < 2 * n; c++) columns[c]![k] = y[c]!;
        } else {
          for (let c = 0; c < 2 * n; c++) columns[c]![k] = dense(c, tk);
        }
        k++;
      }
      this.filled = k;
      if (dense === undefined) return; // the call at the start of a solve
      callsThisSolve = 1;
      this.timeReached = x;
      this.lastStepSize = x - xOld;
      this.state = y;
      this.acceptedSteps++;
      if (signal?.aborted) throw new StopIntegration("cancelled", "the simulation was cancelled");
      // The clock every fourth step: a step takes microseconds, reading the clock a good part of one.
      if ((this.acceptedSteps & 3) !== 0) return;
      const wall = now();
      if (wall > deadline) throw new StopIntegration("time_limit", `the time limit of ${timeLimitMs} ms was reached`);
      if (onProgress && wall - lastProgress >= progressIntervalMs) {
        lastProgress = wall;
        onProgress({ time: x, fraction: (x - startTime) / span, rhsEvaluations: this.evaluationCount(), wallTimeMs: wall - this.began });
      }
    };
    this.resetSolveCounter = () => {
      callsThisSolve = 0;
    };
    if (stepKernel !== null && this.solver instanceof Dop853) {
      const kernelValues = stepKernel.variables;
      stepKernel.setInputs(
        inputCount === 0
          ? null
          : (t) => {
              writeInputs(t);
              for (let k = 0; k < inputCount; k++) kernelValues[inputSlot + k] = values[inputSlot + k]!;
            },
      );
      // The right-hand side's own checks, once per step: the time limit, cancelling, and a step so
      // small that a stage's time is within roundoff of the last accepted one (that step then runs
      // in JavaScript, where the right-hand side reports it).
      let kernelSteps = 0;
      this.solver.beforeKernelStep = (x, h) => {
        if ((++kernelSteps & 7) === 0) {
          if (now() > deadline) throw new StopIntegration("time_limit", `the time limit of ${timeLimitMs} ms was reached`);
          if (signal?.aborted) throw new StopIntegration("cancelled", "the simulation was cancelled");
        }
        return SMALLEST_STAGE_OFFSET * Math.abs(h) <= tinyOffset(Math.abs(x) + Math.abs(h));
      };
    }
    if (constraintSet) this.projectInitialState(constraintSet);
  }

  /**
   * Brings the given initial state onto the constraints before the run starts
   * and records what changed; refuses, naming the constraint, a set that cannot
   * be met or solved at the start.
   */
  private projectInitialState(set: ConstraintSet): void {
    const { n, time } = this.layout;
    const values = this.values;
    for (let i = 0; i < 2 * n; i++) values[i] = this.state[i]!;
    values[time] = this.startTime;
    this.writeInputs(this.startTime);
    const given = Array.from(this.state);
    const residuals = new Float64Array(set.m);
    const rateResiduals = new Float64Array(set.m);
    set.residuals(values, residuals, rateResiduals);
    const scaleQ = 1 + Math.max(...given.slice(0, n).map(Math.abs));
    const scaleRates = 1 + Math.max(...given.slice(n).map(Math.abs));
    const refuse = (error: unknown): never => {
      if (error instanceof ConstraintFailure) {
        throw new SimulationSetupError("constraint", `constraints.${error.constraint ?? set.names[0]}`, `at the start: ${error.message}`);
      }
      throw error;
    };
    let step;
    try {
      step = set.projectState(values, PROJECTION_TOLERANCE * scaleQ);
    } catch (error) {
      refuse(error);
    }
    const worst = set.worstPositionConstraint(values);
    if (worst && !(Math.abs(worst.residual) <= CONSISTENCY_TOLERANCE * scaleQ)) {
      throw new SimulationSetupError(
        "constraint",
        `constraints.${worst.name}`,
        `the initial state cannot be brought onto the constraint "${worst.name}" (it is still ${Number(worst.residual.toPrecision(3))} after projection): ` +
          "the constraints contradict each other, or have no solution near the given coordinates",
      );
    }
    const mf = new Float64Array(n * n + n);
    this.evaluateMassForcing(values, mf);
    try {
      set.solveAugmented(values, mf, new Float64Array(n), new Float64Array(set.m));
    } catch (error) {
      refuse(error);
    }
    this.state = Array.from(values.subarray(0, 2 * n));
    const moved = (from: number, to: number, scale: number) => Math.abs(to - from) > MET_TOLERANCE * scale;
    if (step!.positionBefore > MET_TOLERANCE * scaleQ || step!.rateBefore > MET_TOLERANCE * scaleRates) {
      const names = this.system.coordinateNames;
      this.initialProjection = {
        coordinates: names.flatMap((name, i) => (moved(given[i]!, this.state[i]!, scaleQ) ? [{ name, given: given[i]!, projected: this.state[i]! }] : [])),
        rates: names.flatMap((name, i) =>
          moved(given[n + i]!, this.state[n + i]!, scaleRates) ? [{ name, given: given[n + i]!, projected: this.state[n + i]! }] : [],
        ),
        residuals: set.names.map((name, k) => ({ name, kind: set.kinds[k]!, given: residuals[k]! })),
      };
    }
  }

  /**
   * Projects the state the integrator reached at an output time onto the
   * constraints and writes it to that output point; the next segment starts
   * from it.
   */
  private projectAt(set: ConstraintSet, t: number): void {
    const { n, time } = this.layout;
    const values = this.values;
    for (let i = 0; i < 2 * n; i++) values[i] = this.state[i]!;
    values[time] = t;
    this.writeInputs(t);
    let scaleQ = 1;
    for (let i = 0; i < n; i++) scaleQ = Math.max(scaleQ, 1 + Math.abs(values[i]!));
    let step;
    try {
      step = set.projectState(values, PROJECTION_TOLERANCE * scaleQ);
    } catch (error) {
      if (error instanceof ConstraintFailure) throw new StopIntegration(error.reason, `${error.message} (t = ${formatTime(t)})`, error.constraint);
      throw error;
    }
    if (!(step.positionAfter <= CONSISTENCY_TOLERANCE * scaleQ)) {
      const worst = set.worstPositionConstraint(values);
      throw new StopIntegration(
        "singular_constraints",
        `the motion left the constraint "${worst?.name ?? set.names[0]}" near t = ${formatTime(t)} and could not be brought back`,
        worst?.name ?? null,
      );
    }
    this.largestCorrection.coordinates = Math.max(this.largestCorrection.coordinates, step.coordinates);
    this.largestCorrection.rates = Math.max(this.largestCorrection.rates, step.rates);
    this.state = Array.from(values.subarray(0, 2 * n));
    const k = this.filled - 1;
    if (k >= 0 && this.outputTimes[k] === t) for (let c = 0; c < 2 * n; c++) this.columns[c]![k] = this.state[c]!;
  }

  private readonly resetSolveCounter: () => void;
  /** Returns the step kernel this run holds, if any, for the next run. */
  private releaseStepKernel: (() => void) | null = null;

  canContinue(): boolean {
    return !this.done;
  }

  /** The first output time at or after `t`, capped at the end time. */
  outputTimeAtOrAfter(t: number): number {
    const times = this.outputTimes;
    for (let k = this.filled; k < times.length; k++) if (times[k]! >= t) return times[k]!;
    return this.endTime;
  }

  /** Integrates from the time reached to `until` (≤ end time). */
  advance(until: number): void {
    if (this.done) return;
    const target = Math.min(until, this.endTime);
    const set = this.constraintSet;
    if (set === null) {
      this.solveTo(target);
      return;
    }
    // One output interval at a time, projecting at each output time.
    while (!this.done && this.timeReached < target) {
      const next = Math.min(this.outputTimeAfter(this.timeReached), target);
      this.solveTo(next);
      if (this.failure) return;
      try {
        this.projectAt(set, next);
      } catch (error) {
        if (error instanceof StopIntegration) {
          this.fail(error.reason, error.message, error.constraint);
          return;
        }
        throw error;
      }
    }
  }

  /** Right-hand sides evaluated so far, by the JavaScript path and by the step kernel. */
  private evaluationCount(): number {
    return this.rhsEvaluations + (this.solver instanceof Dop853 ? this.solver.kernelEvaluations : 0);
  }

  /** The first output time after `t`, or the end time. */
  private outputTimeAfter(t: number): number {
    const times = this.outputTimes;
    for (let k = this.filled; k < times.length; k++) if (times[k]! > t) return times[k]!;
    return this.endTime;
  }

  private solveTo(target: number): void {
    if (this.lastStepSize > 0) this.solver.initialStepSize = this.lastStepSize;
    this.resetSolveCounter();
    try {
      const outcome = this.solveWithMethod(target);
      if (outcome.outcome === "max_steps") {
        this.fail("max_steps", `the integrator needed more than ${this.solver.maxSteps} steps`);
        return;
      }
      if (outcome.outcome === "step_size_underflow") {
        this.fail("step_size_underflow", `the step size fell to roundoff level near t = ${formatTime(outcome.x)}`);
        return;
      }
      this.timeReached = target;
      this.state = outcome.y;
      // odex stops once it is within ten roundoffs of the target, possibly a
      // hair short of it; output times in that gap take the final state.
      const times = this.outputTimes;
      while (this.filled < times.length && times[this.filled]! <= target) {
        for (let c = 0; c < this.columns.length; c++) this.columns[c]![this.filled] = outcome.y[c]!;
        this.filled++;
      }
      if (target >= this.endTime) this.done = true;
    } catch (error) {
      if (error instanceof StopIntegration) {
        this.fail(error.reason, error.message, error.constraint);
        return;
      }
      throw error;
    }
  }

  /** One call of the method's solver from the time reached to `target`. */
  private solveWithMethod(target: number): { outcome: "converged" | "max_steps" | "step_size_underflow" | "stopped"; x: number; y: number[] } {
    const solver = this.solver;
    if (solver instanceof Dop853) return solver.solve(this.rhs, this.timeReached, this.state, target, this.onStep);
    const derivative = new Array<number>(this.columns.length).fill(0);
    const rhs = this.rhs;
    const outcome = solver.solve(
      (t, y) => {
        rhs(t, y, derivative);
        return derivative;
      },
      this.timeReached,
      Array.from(this.state),
      target,
      this.onStep,
    );
    return { outcome: outcome.outcome === Outcome.MaxStepsExceeded ? "max_steps" : "converged", x: outcome.xEnd, y: outcome.y };
  }

  private fail(reason: SimulationFailureReason, message: string, constraint: string | null = null): void {
    this.failure = { reason, message, timeReached: this.timeReached, ...(constraint !== null ? { constraint } : {}) };
    this.done = true;
  }

  finish(): SimulationResult {
    this.releaseStepKernel?.();
    this.releaseStepKernel = null;
    const { n } = this.layout;
    const count = this.filled;
    const times = this.outputTimes.subarray(0, count);
    const coordinates = this.columns.slice(0, n).map((c) => c.subarray(0, count));
    const rates = this.columns.slice(n).map((c) => c.subarray(0, count));
    const trajectory: Trajectory = { coordinateNames: this.system.coordinateNames, times, coordinates, rates };
    const energy = this.energy ? this.energyAlong(trajectory) : null;
    const { constraints, outputs } = this.loadsAlong(trajectory);
    return {
      status: this.failure ? "failed" : "completed",
      failure: this.failure,
      timeReached: this.failure ? this.failure.timeReached : this.timeReached,
      trajectory,
      energy,
      parameterValues: { ...this.parameterValues },
      stats: {
        rhsEvaluations: this.evaluationCount(),
        acceptedSteps: this.acceptedSteps,
        wallTimeMs: now() - this.began,
        stepTolerance: { relative: this.solver.relativeTolerance as number, absolute: this.solver.absoluteTolerance as number },
        method: this.method,
      },
      constraints,
      outputs,
    };
  }

  /**
   * The multipliers, the constraint residuals and the outputs at every output
   * point, from the augmented system (or M q'' = f without constraints) solved
   * again at the stored state.
   */
  private loadsAlong(trajectory: Trajectory): { constraints: ConstraintReport | null; outputs: OutputSeries[] } {
    const set = this.constraintSet;
    const outputsEvaluator = this.outputEvaluator;
    if (set === null && outputsEvaluator === null) return { constraints: null, outputs: [] };
    const { n, time, length } = this.layout;
    const m = set?.m ?? 0;
    const count = trajectory.times.length;
    const specs = this.system.outputs ?? [];
    const multipliers = Array.from({ length: m }, () => new Float64Array(count));
    const residuals = Array.from({ length: m }, () => new Float64Array(count));
    const rateResiduals = Array.from({ length: m }, () => new Float64Array(count));
    const outputColumns = specs.map(() => new Float64Array(count));
    const extended = new Float64Array(length + n + m);
    const values = this.values;
    const mf = new Float64Array(n * n + n);
    const acc = new Float64Array(n);
    const lambda = new Float64Array(m);
    const position = new Float64Array(m);
    const rate = new Float64Array(m);
    const out = new Float64Array(specs.length);
    const lu = set === null ? createLuWorkspace(n) : null;
    for (let k = 0; k < count; k++) {
      const t = trajectory.times[k]!;
      for (let i = 0; i < n; i++) {
        values[i] = trajectory.coordinates[i]![k]!;
        values[n + i] = trajectory.rates[i]![k]!;
      }
      values[time] = t;
      this.writeInputs(t);
      this.evaluateMassForcing(values, mf);
      let solved = true;
      try {
        if (set) {
          set.solveAugmented(values, mf, acc, lambda);
          set.residuals(values, position, rate);
        } else {
          for (let i = 0; i < n * n; i++) lu!.matrix[i] = mf[i]!;
          for (let i = 0; i < n; i++) acc[i] = mf[n * n + i]!;
          solveInPlace(lu!, acc);
        }
      } catch (error) {
        if (!(error instanceof ConstraintFailure || error instanceof SingularMatrixError)) throw error;
        solved = false;
      }
      for (let j = 0; j < m; j++) {
        multipliers[j]![k] = solved ? lambda[j]! : NaN;
        residuals[j]![k] = position[j]!;
        rateResiduals[j]![k] = rate[j]!;
      }
      if (outputsEvaluator) {
        if (solved) {
          extended.set(values);
          extended.set(acc, length);
          extended.set(lambda, length + n);
          outputsEvaluator.evaluate(extended, out);
        }
        for (let j = 0; j < specs.length; j++) outputColumns[j]![k] = solved ? out[j]! : NaN;
      }
    }
    const outputs: OutputSeries[] = specs.map((spec, j) => ({
      name: spec.name,
      unit: spec.unit?.trim() ? spec.unit.trim() : null,
      values: outputColumns[j]!,
      peak: peakOf(trajectory.times, outputColumns[j]!),
    }));
    if (set === null) return { constraints: null, outputs };
    const maxAbs = (column: Float64Array) => column.reduce((worst, v) => (Number.isFinite(v) ? Math.max(worst, Math.abs(v)) : Infinity), 0);
    return {
      constraints: {
        names: [...set.names],
        kinds: [...set.kinds],
        multiplierNames: [...set.multiplierNames],
        multipliers,
        residuals,
        rateResiduals,
        maxResidual: residuals.map(maxAbs),
        initialProjection: this.initialProjection,
        largestCorrection: { ...this.largestCorrection },
        method: CONSTRAINT_METHOD,
        explicitTime: set.explicitTime,
      },
      outputs,
    };
  }

  private energyAlong(trajectory: Trajectory): Float64Array {
    const energy = this.energy!;
    const { n, time } = this.layout;
    const values = this.values;
    const out = new Float64Array(trajectory.times.length);
    for (let k = 0; k < out.length; k++) {
      const t = trajectory.times[k]!;
      for (let i = 0; i < n; i++) {
        values[i] = trajectory.coordinates[i]![k]!;
        values[n + i] = trajectory.rates[i]![k]!;
      }
      values[time] = t;
      this.writeInputs(t);
      out[k] = energy(values);
    }
    return out;
  }
}

function formatTime(t: number): string {
  return `${Number(t.toPrecision(6))} s`;
}

function buildOutputTimes(settings: SimulationSettings, startTime: number, endTime: number, maxOutputPoints: number): Float64Array {
  if (settings.outputTimes !== undefined) {
    const given = settings.outputTimes;
    if (given.length === 0) throw new SimulationSetupError("settings", "outputTimes", "at least one output time is needed");
    if (given.length > maxOutputPoints) throw new SimulationSetupError("too_large", "outputTimes", `more than ${maxOutputPoints} output times`);
    const times = Float64Array.from(given);
    for (let k = 0; k < times.length; k++) {
      const t = times[k]!;
      if (!(t >= startTime && t <= endTime)) {
        throw new SimulationSetupError("settings", "outputTimes", `output time ${t} lies outside [${startTime}, ${endTime}]`);
      }
      if (k > 0 && !(t > times[k - 1]!)) throw new SimulationSetupError("settings", "outputTimes", "output times must be strictly increasing");
    }
    return times;
  }
  const step = settings.outputStep;
  if (step === undefined || !(step > 0) || !Number.isFinite(step)) {
    throw new SimulationSetupError("settings", "outputStep", "the output step must be a positive number");
  }
  const steps = (endTime - startTime) / step;
  if (!(steps + 1 <= maxOutputPoints)) {
    throw new SimulationSetupError("too_large", "outputStep", `the output step gives more than ${maxOutputPoints} points; choose a larger step`);
  }
  const whole = Math.floor(steps + 1e-9);
  const extra = steps - whole > 1e-9 ? 1 : 0;
  const times = new Float64Array(whole + 1 + extra);
  for (let k = 0; k <= whole; k++) times[k] = Math.min(startTime + k * step, endTime);
  times[times.length - 1] = endTime;
  return times;
}

function resolveParameters(system: MechanicalSystem, overrides: Readonly<Record<string, number>> = {}): Record<string, number> {
  const known = new Set(system.parameters.map((p) => p.name));
  for (const name of Object.keys(overrides)) {
    if (!known.has(name)) throw new SimulationSetupError("unknown_name", `parameters.${name}`, `"${name}" is not a parameter of this system`);
  }
  const values: Record<string, number> = {};
  for (const p of system.parameters) {
    const value = Object.prototype.hasOwnProperty.call(overrides, p.name) ? overrides[p.name] : p.value;
    if (value === undefined)
      throw new SimulationSetupError("missing_parameter", `parameters.${p.name}`, `the parameter "${p.name}" has no value; give one to simulate`);
    if (!Number.isFinite(value)) throw new SimulationSetupError("settings", `parameters.${p.name}`, `the value of "${p.name}" must be a finite number`);
    values[p.name] = value;
  }
  return values;
}

function assign(names: readonly string[], given: NumericAssignment, field: string): number[] {
  let result: number[];
  if (Array.isArray(given)) {
    const list = given as readonly number[];
    if (list.length !== names.length) throw new SimulationSetupError("dimension", field, `expected ${names.length} values, one per coordinate`);
    result = [...list];
  } else {
    const record = given as Readonly<Record<string, number>>;
    for (const name of Object.keys(record)) {
      if (!names.includes(name)) throw new SimulationSetupError("unknown_name", `${field}.${name}`, `"${name}" is not a coordinate`);
    }
    result = names.map((name) => record[name] ?? 0);
  }
  result.forEach((v, i) => {
    if (!Number.isFinite(v)) throw new SimulationSetupError("settings", `${field}.${names[i]}`, "initial values must be finite numbers");
  });
  return result;
}

/**
 * Returns a function that writes every input's value at time t into the packed
 * variable vector. Expression inputs are compiled together, over `t` and the
 * parameters, from their parsed trees.
 */
function compileInputs(
  system: MechanicalSystem,
  layout: VariableLayout,
  values: Float64Array,
  inputs: Readonly<Record<string, string | InputSignal>> = {},
  parameterValues: Record<string, number>,
): (t: number) => void {
  const names = system.inputNames;
  for (const name of Object.keys(inputs)) {
    if (!names.includes(name)) throw new SimulationSetupError("unknown_name", `inputs.${name}`, `"${name}" is not an input of this system`);
  }
  const expressionSlots: number[] = [];
  const texts: string[] = [];
  const fields: string[] = [];
  const signals: { slot: number; signal: InputSignal }[] = [];
  names.forEach((name, j) => {
    const given = inputs[name];
    const slot = layout.inputs + j;
    if (typeof given === "string") {
      expressionSlots.push(slot);
      texts.push(given);
      fields.push(`inputs.${name}`);
    } else if (typeof given === "function") {
      signals.push({ slot, signal: given });
    } else {
      values[slot] = 0;
    }
  });
  if (texts.length === 0 && signals.length === 0) return () => {};

  const parameterNames = system.parameters.map((p) => p.name);
  const compiled = texts.length > 0 ? compileLocated(texts, fields, ["t", ...parameterNames]) : null;
  const inputVariables = new Float64Array(1 + parameterNames.length);
  parameterNames.forEach((name, i) => {
    inputVariables[1 + i] = parameterValues[name]!;
  });
  const expressionOut = new Float64Array(texts.length);
  return (t: number) => {
    if (compiled) {
      inputVariables[0] = t;
      compiled.evaluate(inputVariables, expressionOut);
      for (let i = 0; i < expressionSlots.length; i++) values[expressionSlots[i]!] = expressionOut[i]!;
    }
    for (let i = 0; i < signals.length; i++) values[signals[i]!.slot] = signals[i]!.signal(t);
  };
}
