import { CholeskyDecomposition, EigenvalueDecomposition, LuDecomposition, Matrix, solve } from "ml-matrix";
import { compileExpressions, type CompiledExpressions, type MassMatrixSystem } from "./compile";
import { ModelError } from "./errors";
import { residualJacobians } from "./jacobians";

export interface OperatingPoint {
  q: readonly number[];
  /** Defaults to zeros. */
  rates?: readonly number[];
  /** Input values; default zeros. */
  inputs?: readonly number[];
  t?: number;
}

export interface Complex {
  re: number;
  im: number;
}

/**
 * "oscillating": ω² > 0. "rigid": ω² is zero to rounding (|ω²| ≤ 10⁻¹⁰ × the
 * largest |ω²|), a direction with no restoring stiffness. "divergent": ω² < 0,
 * a direction in which the undamped motion grows like exp(√(−ω²)·t).
 */
export type ModeKind = "oscillating" | "rigid" | "divergent";

export interface Mode {
  /** ω² from K v = ω² M v; negative for a direction in which the point is unstable. */
  omegaSquared: number;
  kind: ModeKind;
  /** Natural frequency in rad/s; 0 for a rigid mode, null for a divergent one. */
  radPerSecond: number | null;
  hertz: number | null;
  /** √(−ω²) in 1/s for a divergent mode, else null. */
  growthRate: number | null;
  /** Mode shape over the coordinates, scaled so its largest component is +1. */
  shape: number[];
}

export interface Linearization {
  /** State names, x = [q; q']. */
  state: string[];
  inputs: string[];
  /** 2n×2n, ẋ ≈ A x + B u about the point. */
  A: number[][];
  /** 2n×m. */
  B: number[][];
  massMatrix: number[][];
  /** K = −∂f/∂q (with the ∂M/∂q·q'' term where q'' ≠ 0). */
  stiffness: number[][];
  /** C = −∂f/∂q'. */
  damping: number[][];
  /** Accelerations at the point; all zero at an equilibrium. */
  accelerations: number[];
  eigenvalues: Complex[];
  /** Undamped modes from K v = ω² M v, sorted by ω². */
  modes: Mode[];
}

/** Compiled M, f and the residual Jacobians of a system, reusable over many points. */
export interface CompiledAnalysis {
  n: number;
  m: number;
  variables: string[];
  evaluator: CompiledExpressions;
  /** Evaluates everything at (q, q', q'', t, u) into plain matrices. */
  at(
    q: readonly number[],
    rates: readonly number[],
    accelerations: readonly number[],
    t: number,
    u: readonly number[],
  ): {
    mass: number[][];
    forcing: number[];
    byCoordinate: number[][];
    byRate: number[][];
    byInput: number[][];
  };
}

export function compileAnalysis(system: MassMatrixSystem): CompiledAnalysis {
  const n = system.coordinates.length;
  const inputs = system.inputs ?? [];
  const m = inputs.length;
  const trees = residualJacobians(system);
  const variables = [...system.coordinates, ...system.coordinates.map((q) => `${q}'`), ...system.coordinates.map((q) => `${q}''`), "t", ...inputs];
  const outputs = [...trees.mass.flat(), ...trees.forcing, ...trees.byCoordinate.flat(), ...trees.byRate.flat(), ...trees.byInput.flat()];
  const evaluator = compileExpressions(outputs, variables, { constants: system.parameters });
  const values = new Float64Array(variables.length);
  const out = new Float64Array(outputs.length);
  const take = (offset: number, rows: number, cols: number) =>
    Array.from({ length: rows }, (_, i) => Array.from({ length: cols }, (_, j) => out[offset + i * cols + j]!));
  return {
    n,
    m,
    variables,
    evaluator,
    at(q, rates, accelerations, t, u) {
      for (let i = 0; i < n; i++) {
        values[i] = q[i]!;
        values[n + i] = rates[i]!;
        values[2 * n + i] = accelerations[i]!;
      }
      values[3 * n] = t;
      for (let k = 0; k < m; k++) values[3 * n + 1 + k] = u[k]!;
      evaluator.evaluate(values, out);
      let offset = 0;
      const mass = take(offset, n, n);
      offset += n * n;
      const forcing = take(offset, 1, n)[0]!;
      offset += n;
      const byCoordinate = take(offset, n, n);
      offset += n * n;
      const byRate = take(offset, n, n);
      offset += n * n;
      const byInput = take(offset, n, m);
      return { mass, forcing, byCoordinate, byRate, byInput };
    },
  };
}

/**
 * Linearizes q'' = M⁻¹ f about a point: state-space A, B with x = [q; q'],
 * eigenvalues of A, and the undamped natural frequencies and mode shapes.
 * Derivatives are exact (differentiate.ts), evaluated numerically.
 *
 * @example
 * linearizeAbout({ coordinates: ["x"], massMatrix: [["m"]], forcing: ["-k*x"], parameters: { m: 1, k: 4 } }, { q: [0] }).modes[0].radPerSecond // 2
 */
export function linearizeAbout(system: MassMatrixSystem | CompiledAnalysis, point: OperatingPoint): Linearization {
  const compiled = "evaluator" in system ? system : compileAnalysis(system);
  const { n, m } = compiled;
  const zeros = new Array<number>(n).fill(0);
  const rates = point.rates ?? zeros;
  const u = point.inputs ?? new Array<number>(m).fill(0);
  const t = point.t ?? 0;
  // First pass for M and f, second pass with q'' = M⁻¹ f for the Jacobians.
  const first = compiled.at(point.q, rates, zeros, t, u);
  const mass = new Matrix(first.mass);
  const accelerations = solveOrThrow(mass, Matrix.columnVector(first.forcing)).to1DArray();
  const e = accelerations.every((a) => a === 0) ? first : compiled.at(point.q, rates, accelerations, t, u);

  const stiffness = new Matrix(e.byCoordinate);
  const damping = new Matrix(e.byRate);
  const lowerLeft = solveOrThrow(mass, stiffness).neg();
  const lowerRight = solveOrThrow(mass, damping).neg();
  const A = Matrix.zeros(2 * n, 2 * n);
  for (let i = 0; i < n; i++) {
    A.set(i, n + i, 1);
    for (let j = 0; j < n; j++) {
      A.set(n + i, j, lowerLeft.get(i, j));
      A.set(n + i, n + j, lowerRight.get(i, j));
    }
  }
  const B = Matrix.zeros(2 * n, m);
  if (m > 0) {
    const lower = solveOrThrow(mass, new Matrix(e.byInput)).neg();
    for (let i = 0; i < n; i++) for (let k = 0; k < m; k++) B.set(n + i, k, lower.get(i, k));
  }
  const decomposition = new EigenvalueDecomposition(A);
  const eigenvalues = decomposition.realEigenvalues.map((re, i) => ({ re, im: decomposition.imaginaryEigenvalues[i]! }));
  return {
    state: [...compiled.variables.slice(0, 2 * n)],
    inputs: compiled.variables.slice(3 * n + 1),
    A: A.to2DArray(),
    B: B.to2DArray(),
    massMatrix: mass.to2DArray(),
    stiffness: stiffness.to2DArray(),
    damping: damping.to2DArray(),
    accelerations,
    eigenvalues,
    modes: normalModes(mass, stiffness),
  };
}

/** |ω²| at or below this fraction of the largest |ω²| is a rigid mode (rounding of K's zero eigenvalue). */
const RIGID_MODE_TOLERANCE = 1e-10;

/**
 * Solves K v = ω² M v. With M symmetric positive definite and K symmetric it
 * uses the Cholesky reduction L⁻¹ K L⁻ᵀ (real ω², orthogonal modes); otherwise
 * the general eigenproblem of M⁻¹ K, keeping real parts.
 */
export function normalModes(mass: Matrix, stiffness: Matrix): Mode[] {
  const n = mass.rows;
  if (n === 0) return [];
  const symmetric = (a: Matrix) => {
    const scale = Math.max(maxAbs(a), 1e-300);
    for (let i = 0; i < n; i++) for (let j = 0; j < i; j++) if (Math.abs(a.get(i, j) - a.get(j, i)) > 1e-10 * scale) return false;
    return true;
  };
  let values: number[];
  let vectors: Matrix;
  const cholesky = symmetric(mass) && symmetric(stiffness) ? new CholeskyDecomposition(mass) : null;
  if (cholesky && cholesky.isPositiveDefinite()) {
    const L = cholesky.lowerTriangularMatrix;
    const Linv = solve(L, Matrix.eye(n));
    const reduced = Linv.mmul(stiffness).mmul(Linv.transpose());
    const sym = reduced.add(reduced.transpose()).mul(0.5);
    const decomposition = new EigenvalueDecomposition(sym, { assumeSymmetric: true });
    values = decomposition.realEigenvalues;
    vectors = Linv.transpose().mmul(decomposition.eigenvectorMatrix);
  } else {
    const decomposition = new EigenvalueDecomposition(solveOrThrow(mass, stiffness));
    values = decomposition.realEigenvalues;
    vectors = decomposition.eigenvectorMatrix;
  }
  const largest = Math.max(0, ...values.map(Math.abs));
  const modes = values.map((omegaSquared, k): Mode => {
    const shape = normaliseShape(vectors.getColumn(k));
    const kind: ModeKind = Math.abs(omegaSquared) <= RIGID_MODE_TOLERANCE * largest ? "rigid" : omegaSquared > 0 ? "oscillating" : "divergent";
    const radPerSecond = kind === "rigid" ? 0 : kind === "oscillating" ? Math.sqrt(omegaSquared) : null;
    const growthRate = kind === "divergent" ? Math.sqrt(-omegaSquared) : null;
    return { omegaSquared, kind, radPerSecond, hertz: radPerSecond === null ? null : radPerSecond / (2 * Math.PI), growthRate, shape };
  });
  return modes.sort((a, b) => a.omegaSquared - b.omegaSquared);
}

/**
 * Pairs each oscillating mode with the eigenvalue of A that belongs to it once
 * damping is included: the unused eigenvalue with Im λ > 0 whose |λ| is
 * nearest to ω (equal for a single damped degree of freedom, close for light
 * or proportional damping), or null when none lies within half of ω (an
 * overdamped mode has no oscillating eigenvalue). Rigid and divergent modes
 * get null.
 *
 * @example matchEigenvalues(lin.modes, lin.eigenvalues)[0] // { re: -0.05, im: 2.248 }: ζ = −re/|λ|, ω_d = im
 */
export function matchEigenvalues(modes: readonly Mode[], eigenvalues: readonly Complex[]): (Complex | null)[] {
  const scale = Math.max(0, ...eigenvalues.map((l) => Math.hypot(l.re, l.im)));
  const free = eigenvalues.filter((l) => l.im > 1e-9 * scale);
  return modes.map((mode) => {
    if (mode.kind !== "oscillating" || mode.radPerSecond === null) return null;
    const omega = mode.radPerSecond;
    let best = -1;
    for (let k = 0; k < free.length; k++) {
      const distance = Math.abs(Math.hypot(free[k]!.re, free[k]!.im) - omega);
      if (distance <= 0.5 * omega && (best < 0 || distance < Math.abs(Math.hypot(free[best]!.re, free[best]!.im) - omega))) best = k;
    }
    return best < 0 ? null : free.splice(best, 1)[0]!;
  });
}

/** Scales a vector so that its largest component (the first, on a tie) is +1. */
function normaliseShape(v: number[]): number[] {
  const largest = Math.max(...v.map(Math.abs));
  if (largest === 0) return v;
  const pivot = v.find((x) => Math.abs(x) >= largest * (1 - 1e-9))!;
  return v.map((x) => {
    const y = x / pivot;
    return Math.abs(y) < 1e-14 ? 0 : y;
  });
}

function solveOrThrow(a: Matrix, b: Matrix): Matrix {
  let result: Matrix;
  try {
    result = new LuDecomposition(a).solve(b);
  } catch {
    throw new ModelError("singular", "massMatrix", "the mass matrix is singular at this point");
  }
  const scale = Math.max(maxAbs(a), 1e-300);
  const residual = maxAbs(a.mmul(result).sub(b));
  if (!result.to1DArray().every(Number.isFinite) || residual > 1e-8 * Math.max(scale * maxAbs(result), maxAbs(b))) {
    throw new ModelError("singular", "massMatrix", "the mass matrix is singular at this point");
  }
  return result;
}

function maxAbs(a: Matrix): number {
  let largest = 0;
  for (const x of a.to1DArray()) largest = Math.max(largest, Math.abs(x));
  return largest;
}
