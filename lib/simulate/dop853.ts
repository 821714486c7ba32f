import * as coefficients from "./dop853-coefficients";
import type { Dop853Kernel } from "./dop853-wasm";

/**
 * DOP853: the explicit embedded Runge–Kutta method of order 8(5,3) by Dormand
 * and Prince, with step-size control and dense output of order 7, following
 * Hairer, Nørsett & Wanner, Solving Ordinary Differential Equations I (2nd ed.),
 * sections II.4 (step-size control, starting step), II.6 (dense output) and
 * II.10, and the authors' published code dop853.f (the same error norm, the
 * same step-size factors, the same starting-step heuristic; no stiffness test).
 *
 * The interface mirrors the parts of odex's Solver the integrator uses, so the
 * two are interchangeable; the right-hand side writes into a given array
 * instead of returning one, and every work array is a Float64Array allocated
 * once per solver.
 *
 * Given a step kernel (dop853-wasm.ts), the solver runs each step's stages,
 * its acceptance and its dense output in WebAssembly, on work arrays that are
 * views of the kernel's memory, and keeps the step-size control here. A call
 * the kernel cannot complete (status non-zero) is redone by this file's own
 * code with `f`, from the same arrays.
 */

/** Writes y'(t) into `dydt`; may throw to stop the integration. */
export type RightHandSide = (t: number, y: Float64Array, dydt: Float64Array) => void;

/**
 * Called once at the start (without `dense`) and after every accepted step
 * with the step's interval [xOld, x], the new state y, and the dense output
 * `dense(component, t)` valid on that interval. Return false to stop.
 */
export type StepCallback = (step: number, xOld: number, x: number, y: Float64Array, dense?: (component: number, t: number) => number) => boolean | void;

export type Dop853Outcome = "converged" | "max_steps" | "step_size_underflow" | "stopped";

export interface Dop853Result {
  outcome: Dop853Outcome;
  /** The time reached. */
  x: number;
  /** The state at x (a copy). */
  y: number[];
  /** The step size proposed for the next step. */
  nextStepSize: number;
}

const STAGES = 12;
// Module-local copies: a transpiled import can be a getter on every access, and these are read in the inner loops.
const { A, B, C, D, E3, E5 } = coefficients;
const [B0, B5, B6, B7, B8, B9, B10, B11] = [0, 5, 6, 7, 8, 9, 10, 11].map((j) => B[j]!) as [number, number, number, number, number, number, number, number];
const [E30, E38, E311] = [0, 8, 11].map((j) => E3[j]!) as [number, number, number];
const [E50, E55, E56, E57, E58, E59, E510, E511] = [0, 5, 6, 7, 8, 9, 10, 11].map((j) => E5[j]!) as [
  number,
  number,
  number,
  number,
  number,
  number,
  number,
  number,
];
// E3 equals B except at stages 0, 8 and 11 (bhh in dop853.f), and stages 1 … 4 carry no weight.
for (const j of [1, 2, 3, 4]) if (B[j] !== 0 || E3[j] !== 0 || E5[j] !== 0) throw new Error("DOP853 weights: stage " + j + " must be 0");
for (const j of [5, 6, 7, 9, 10]) if (E3[j] !== B[j]) throw new Error("DOP853 weights: E3 must equal B at stage " + j);
/** Safety factor, bounds on the step-size ratio, and the exponent: dop853.f defaults (SAFE = 0.9, FAC1 = 0.333, FAC2 = 6, BETA = 0). */
const SAFE = 0.9;
const FAC1 = 0.333;
const FAC2 = 6;
const UROUND = 2.3e-16;

export class Dop853 {
  relativeTolerance = 1e-8;
  absoluteTolerance = 1e-10;
  maxSteps = 100_000;
  /** 0: chosen by the starting-step heuristic. */
  initialStepSize = 0;
  /** 0: the whole interval. */
  maxStepSize = 0;
  /** Right-hand-side evaluations over the solver's life. */
  evaluations = 0;
  acceptedSteps = 0;
  rejectedSteps = 0;
  /** Of `evaluations`, those the step kernel made (the right-hand side `f` did not see them). */
  kernelEvaluations = 0;
  /**
   * With a kernel: called before each step; return true to run that step with
   * `f` instead (the caller's per-evaluation checks then apply). May throw to stop.
   */
  beforeKernelStep: ((x: number, h: number) => boolean) | null = null;

  private readonly n: number;
  /** All stage derivatives in one array: stage s (0 … 15), component i at K[s·n + i]. */
  private readonly K: Float64Array;
  /** k[s]: a view of stage s in K, for the right-hand side to write into. */
  private readonly k: Float64Array[];
  private readonly y: Float64Array;
  private readonly yNew: Float64Array;
  private readonly stage: Float64Array;
  private readonly fOld: Float64Array;
  /** Dense-output coefficients: y(xOld + θh) = r0 + θ(r1 + (1−θ)(r2 + θ(r3 + (1−θ)(r4 + θ(r5 + (1−θ)(r6 + θ r7)))))). */
  private readonly cont: Float64Array[];

  private readonly kernel: Dop853Kernel | null;

  constructor(n: number, kernel: Dop853Kernel | null = null) {
    if (kernel !== null && kernel.y.length !== n) throw new RangeError(`the step kernel is for ${kernel.y.length} states, not ${n}`);
    this.n = n;
    this.kernel = kernel;
    this.K = kernel?.K ?? new Float64Array(16 * n);
    this.k = Array.from({ length: 16 }, (_, s) => this.K.subarray(s * n, (s + 1) * n));
    this.y = kernel?.y ?? new Float64Array(n);
    this.yNew = kernel?.yNew ?? new Float64Array(n);
    this.stage = kernel?.stage ?? new Float64Array(n);
    this.fOld = kernel?.fOld ?? new Float64Array(n);
    this.cont = kernel ? [...kernel.cont] : Array.from({ length: 8 }, () => new Float64Array(n));
  }

  /** Integrates from (x, y0) to xEnd, calling `onStep` after each accepted step. */
  solve(f: RightHandSide, x0: number, y0: ArrayLike<number>, xEnd: number, onStep?: StepCallback): Dop853Result {
    const n = this.n;
    const k = this.k;
    const K = this.K;
    const y = this.y;
    const yNew = this.yNew;
    const cont = this.cont;
    const fOld = this.fOld;
    const rtol = this.relativeTolerance;
    const atol = this.absoluteTolerance;
    const kernel = this.kernel;
    for (let i = 0; i < n; i++) y[i] = y0[i]!;
    let x = x0;
    const direction = xEnd >= x0 ? 1 : -1;
    const hmax = this.maxStepSize > 0 ? this.maxStepSize : Math.abs(xEnd - x0);
    const kNew = k[12]!;
    f(x, y, k[0]!);
    this.evaluations++;
    let h = xEnd === x0 ? 0 : this.initialStepSize > 0 ? Math.min(this.initialStepSize, hmax) * direction : this.startingStep(f, x, direction, hmax);
    if (onStep && onStep(0, x, x, y) === false) return this.result("stopped", x, h);
    if (xEnd === x0) return this.result("converged", x, this.initialStepSize);

    let reject = false;
    let last = false;
    let steps = 0;
    let xOld = x;
    let hStep = h;
    let denseReady = false;

    // Dense output on the last accepted step, computed on first use (three more evaluations).
    const dense = (component: number, t: number): number => {
      if (!denseReady) {
        if (kernel !== null && kernel.dense(xOld, hStep) === 0) {
          this.evaluations += 3;
          this.kernelEvaluations += 3;
        } else this.prepareDense(f, xOld, hStep);
        denseReady = true;
      }
      const s = (t - xOld) / hStep;
      const s1 = 1 - s;
      const i = component;
      const tail = cont[4]![i]! + s * (cont[5]![i]! + s1 * (cont[6]![i]! + s * cont[7]![i]!));
      return cont[0]![i]! + s * (cont[1]![i]! + s1 * (cont[2]![i]! + s * (cont[3]![i]! + s1 * tail)));
    };

    for (;;) {
      if (steps >= this.maxSteps) return this.result("max_steps", x, h);
      if (0.1 * Math.abs(h) <= Math.abs(x) * UROUND) return this.result("step_size_underflow", x, h);
      if ((x + 1.01 * h - xEnd) * direction > 0) {
        h = xEnd - x;
        last = true;
      }
      steps++;

      let err = -1;
      if (kernel !== null && !(this.beforeKernelStep !== null && this.beforeKernelStep(x, h))) {
        err = kernel.step(x, h, rtol, atol);
        if (err >= 0 || err !== err) {
          this.evaluations += STAGES - 1;
          this.kernelEvaluations += STAGES - 1;
        }
      }
      // −1: no kernel, or it could not complete the step: this file's own code, with f.
      if (err === -1) err = this.stages(f, x, h);
      if (!(err >= 0 && err < Infinity)) err = Infinity; // NaN from a non-finite stage: reject and shrink.

      // err^(1/8) as three square roots: correctly rounded each, and several times cheaper than Math.pow.
      const fac11 = err === Infinity ? Infinity : Math.sqrt(Math.sqrt(Math.sqrt(err)));
      // BETA = 0 (the dop853.f default): no step-size stabilisation term.
      const fac = Math.max(1 / FAC2, Math.min(1 / FAC1, fac11 / SAFE));
      let hNew = h / fac;

      if (err <= 1) {
        this.acceptedSteps++;
        const xNew = x + h;
        this.evaluations++;
        if (kernel !== null && kernel.accept(xNew) === 0) this.kernelEvaluations++;
        else {
          f(xNew, yNew, kNew);
          // Keep y_old and f_old for the dense output (stages 1 … 12 stay in place until the next step).
          for (let i = 0; i < n; i++) {
            cont[0]![i] = y[i]!;
            fOld[i] = K[i]!;
            y[i] = yNew[i]!;
            K[i] = K[12 * n + i]!;
          }
        }
        xOld = x;
        hStep = h;
        denseReady = false;
        x = xNew;
        if (onStep && onStep(steps, xOld, x, y, dense) === false) return this.result("stopped", x, hNew);
        if (last) return this.result("converged", x, hNew);
        if (Math.abs(hNew) > hmax) hNew = direction * hmax;
        if (reject) hNew = direction * Math.min(Math.abs(hNew), Math.abs(h));
        reject = false;
      } else {
        hNew = h / Math.min(1 / FAC1, fac11 / SAFE);
        reject = true;
        last = false;
        if (this.acceptedSteps >= 1) this.rejectedSteps++;
      }
      h = hNew;
    }
  }

  /** Stages 1 … 11, yNew and the error norm of dop853.f, with f. */
  private stages(f: RightHandSide, x: number, h: number): number {
    const n = this.n;
    const K = this.K;
    const k = this.k;
    const y = this.y;
    const yNew = this.yNew;
    const stage = this.stage;
    const rtol = this.relativeTolerance;
    const atol = this.absoluteTolerance;
    // Stages 1 … 11 (A is sparse: zero coefficients are skipped).
    for (let s = 1; s < STAGES; s++) {
      const a = A[s]!;
      for (let i = 0; i < n; i++) stage[i] = y[i]!;
      for (let j = 0; j < s; j++) {
        const w = a[j]! * h;
        if (w === 0) continue;
        const offset = j * n;
        for (let i = 0; i < n; i++) stage[i] = stage[i]! + w * K[offset + i]!;
      }
      f(x + C[s]! * h, stage, k[s]!);
    }
    this.evaluations += STAGES - 1;

    // The new solution and the error estimate (dop853.f: ERR, ERR2, DENO).
    let err5 = 0;
    let err3 = 0;
    for (let i = 0; i < n; i++) {
      // Stages 1 … 4 have zero weight in B, E3 and E5.
      const a1 = K[i]!,
        a6 = K[5 * n + i]!,
        a7 = K[6 * n + i]!,
        a8 = K[7 * n + i]!;
      const a9 = K[8 * n + i]!,
        a10 = K[9 * n + i]!,
        a11 = K[10 * n + i]!,
        a12 = K[11 * n + i]!;
      const sumB = B0 * a1 + B5 * a6 + B6 * a7 + B7 * a8 + B8 * a9 + B9 * a10 + B10 * a11 + B11 * a12;
      const sum3 = E30 * a1 + B5 * a6 + B6 * a7 + B7 * a8 + E38 * a9 + B9 * a10 + B10 * a11 + E311 * a12;
      const sum5 = E50 * a1 + E55 * a6 + E56 * a7 + E57 * a8 + E58 * a9 + E59 * a10 + E510 * a11 + E511 * a12;
      const yi = y[i]!;
      const next = yi + h * sumB;
      yNew[i] = next;
      const sk = atol + rtol * Math.max(Math.abs(yi), Math.abs(next));
      const e3 = sum3 / sk;
      const e5 = sum5 / sk;
      err3 += e3 * e3;
      err5 += e5 * e5;
    }
    let deno = err5 + 0.01 * err3;
    if (deno <= 0) deno = 1;
    let err = Math.abs(h) * err5 * Math.sqrt(1 / (n * deno));
    if (!(err >= 0 && err < Infinity)) err = Infinity; // NaN from a non-finite stage: reject and shrink.
    return err;
  }

  /**
   * The dense-output coefficients of the accepted step [xOld, xOld + h]
   * (dop853.f, IOUT = 2: three extra stages, then d4 … d7).
   */
  private prepareDense(f: RightHandSide, xOld: number, h: number): void {
    const n = this.n;
    // K's stage 0 already holds the next step's first stage; this step's own is in fOld.
    const K = this.K;
    const fOld = this.fOld;
    const cont = this.cont;
    const stage = this.stage;
    const yOld = cont[0]!;
    for (let s = 13; s < 16; s++) {
      const a = A[s]!;
      const w0 = a[0]! * h;
      for (let i = 0; i < n; i++) stage[i] = yOld[i]! + w0 * fOld[i]!;
      for (let j = 1; j < s; j++) {
        const w = a[j]! * h;
        if (w === 0) continue;
        const offset = j * n;
        for (let i = 0; i < n; i++) stage[i] = stage[i]! + w * K[offset + i]!;
      }
      f(xOld + C[s]! * h, stage, this.k[s]!);
    }
    this.evaluations += 3;
    const fNew = this.k[12]!;
    const yNew = this.y;
    for (let i = 0; i < n; i++) {
      const dy = yNew[i]! - yOld[i]!;
      cont[1]![i] = dy;
      const bspl = h * fOld[i]! - dy;
      cont[2]![i] = bspl;
      cont[3]![i] = dy - h * fNew[i]! - bspl;
    }
    for (let r = 0; r < 4; r++) {
      const d = D[r]!;
      const c = cont[4 + r]!;
      const w0 = d[0]! * h;
      for (let i = 0; i < n; i++) c[i] = w0 * fOld[i]!;
      for (let s = 1; s < 16; s++) {
        const w = d[s]! * h;
        if (w === 0) continue;
        const offset = s * n;
        for (let i = 0; i < n; i++) c[i] = c[i]! + w * K[offset + i]!;
      }
    }
  }

  /** The starting step of dop853.f (HINIT) for order 8: one extra evaluation. */
  private startingStep(f: RightHandSide, x: number, direction: number, hmax: number): number {
    const n = this.n;
    const y = this.y;
    const f0 = this.k[0]!;
    const y1 = this.stage;
    const f1 = this.k[1]!;
    const rtol = this.relativeTolerance;
    const atol = this.absoluteTolerance;
    let dnf = 0;
    let dny = 0;
    for (let i = 0; i < n; i++) {
      const sk = atol + rtol * Math.abs(y[i]!);
      dnf += (f0[i]! / sk) ** 2;
      dny += (y[i]! / sk) ** 2;
    }
    let h = dnf <= 1e-10 || dny <= 1e-10 ? 1e-6 : Math.sqrt(dny / dnf) * 0.01;
    h = Math.min(h, hmax) * direction;
    for (let i = 0; i < n; i++) y1[i] = y[i]! + h * f0[i]!;
    f(x + h, y1, f1);
    this.evaluations++;
    let der2 = 0;
    for (let i = 0; i < n; i++) {
      const sk = atol + rtol * Math.abs(y[i]!);
      der2 += ((f1[i]! - f0[i]!) / sk) ** 2;
    }
    der2 = Math.sqrt(der2) / Math.abs(h);
    const der12 = Math.max(Math.abs(der2), Math.sqrt(dnf));
    const h1 = der12 <= 1e-15 ? Math.max(1e-6, Math.abs(h) * 1e-3) : Math.pow(0.01 / der12, 1 / 8);
    return Math.min(100 * Math.abs(h), h1, hmax) * direction;
  }

  private result(outcome: Dop853Outcome, x: number, h: number): Dop853Result {
    return { outcome, x, y: Array.from(this.y), nextStepSize: h };
  }
}
