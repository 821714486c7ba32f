import { CholeskyDecomposition, EigenvalueDecomposition, LuDecomposition, Matrix, solve } from "ml-matrix";
import { compileExpressions, type CompiledExpressions, type MassMatrixSystem } from "./compile";
import { differentiate } from "./differentiate";
import { ModelError } from "./errors";
import type { Expr } from "./expr/ast";
import { expressionTree, type ExpressionSource } from "./expr/parse";
import { residualJacobians } from "./jacobians";

/**
 * A constraint as the analysis takes it: g(q, t, u) = 0, whose multiplier
 * symbol (`lambda_<name>`) appears in the forcing with the convention of
 * constraints.ts (M q'' = f₀ + Aᵀ λ, A = ∂g/∂q).
 */
export interface AnalysisConstraint {
  name: string;
  kind: "position" | "rate";
  symbol: string;
  expr: ExpressionSource;
}

/** The mass-matrix form with, optionally, position constraints and their multipliers in the forcing. */
export interface AnalysisSystem extends MassMatrixSystem {
  constraints?: readonly AnalysisConstraint[];
}

export interface OperatingPoint {
  q: readonly number[];
  /**
   * Multipliers of a constrained system at the point, in constraint order;
   * solved from the augmented system when absent.
   */
  multipliers?: readonly number[];
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
  /**
   * The coordinates the state is made of: all of them without constraints;
   * with constraints, the independent ones (coordinate partitioning), the
   * others following from them through `basis`.
   */
  coordinates: string[];
  /**
   * With constraints, N (n×r): first-order motions allowed by the constraints
   * are δq = N δz, δz over `coordinates`; null without constraints.
   */
  basis: number[][] | null;
  /** Multipliers at the point (`lambda_<name>`, in constraint order); empty without constraints. */
  multipliers: { symbol: string; value: number }[];
  /**
   * With constraints, the multipliers' first-order change δλ = byState x + byInput u
   * (k×2r and k×m), so outputs that read multipliers (a rope's tension) linearize too;
   * null without constraints.
   */
  multiplierRows: { byState: number[][]; byInput: number[][] } | null;
  /** State names, x = [z; z'] with z = `coordinates`. */
  state: string[];
  inputs: string[];
  /** 2n×2n, ẋ ≈ A x + B u about the point. */
  A: number[][];
  /** 2n×m. */
  B: number[][];
  /** Over `coordinates` (NᵀMN with constraints). */
  massMatrix: number[][];
  /**
   * K = −∂f/∂q (with the ∂M/∂q·q'' term where q'' ≠ 0), over `coordinates`;
   * with constraints NᵀKN, where K holds the multipliers at their values at
   * the point (the constraints' curvature times λ, their geometric stiffness).
   */
  stiffness: number[][];
  /** C = −∂f/∂q' over `coordinates` (NᵀCN with constraints). */
  damping: number[][];
  /** Accelerations of every coordinate at the point; all zero at an equilibrium. */
  accelerations: number[];
  eigenvalues: Complex[];
  /** Undamped modes from K v = ω² M v, sorted by ω²; shapes over every coordinate (N v with constraints). */
  modes: Mode[];
}

/** Compiled M, f and the residual Jacobians of a system, reusable over many points. */
export interface CompiledAnalysis {
  n: number;
  m: number;
  coordinates: string[];
  /** Multiplier symbols of the position constraints, in order; empty without constraints. */
  multipliers: string[];
  /** Constraint names, in the order of `multipliers`. */
  constraintNames: string[];
  variables: string[];
  evaluator: CompiledExpressions;
  /**
   * Evaluates everything at (q, q', q'', t, u) into plain matrices, with the
   * multipliers at `lambda` (zeros when absent, which leaves f₀).
   */
  at(
    q: readonly number[],
    rates: readonly number[],
    accelerations: readonly number[],
    t: number,
    u: readonly number[],
    lambda?: readonly number[],
  ): {
    mass: number[][];
    forcing: number[];
    byCoordinate: number[][];
    byRate: number[][];
    byInput: number[][];
    /** ∂r/∂λ (n×k): −Aᵀ by the sign convention. */
    byMultiplier: number[][];
  };
  /** g(q, t, u), A = ∂g/∂q and ∂g/∂t at a point (k values, k×n, k values). */
  constraintsAt(q: readonly number[], t: number, u: readonly number[]): { residuals: number[]; jacobian: number[][]; timeRates: number[] };
}

export function compileAnalysis(system: AnalysisSystem): CompiledAnalysis {
  const n = system.coordinates.length;
  const inputs = system.inputs ?? [];
  const m = inputs.length;
  const constraints = system.constraints ?? [];
  const rate = constraints.findIndex((c) => c.kind === "rate");
  if (rate >= 0) {
    throw new ModelError(
      "schema",
      `rateConstraints[0]`,
      `rate constraint "${constraints[rate]!.name}": equilibria and the linearization are found for position constraints only`,
    );
  }
  const multipliers = constraints.map((c) => c.symbol);
  const k = multipliers.length;
  // The multipliers are read as inputs after the system's own: ∂r/∂λ comes with ∂r/∂u.
  const trees = residualJacobians({ ...system, inputs: [...inputs, ...multipliers] });
  const variables = [
    ...system.coordinates,
    ...system.coordinates.map((q) => `${q}'`),
    ...system.coordinates.map((q) => `${q}''`),
    "t",
    ...inputs,
    ...multipliers,
  ];
  const outputs = [...trees.mass.flat(), ...trees.forcing, ...trees.byCoordinate.flat(), ...trees.byRate.flat(), ...trees.byInput.flat()];
  const evaluator = compileExpressions(outputs, variables, { constants: system.parameters });
  const values = new Float64Array(variables.length);
  const out = new Float64Array(outputs.length);
  const take = (offset: number, rows: number, cols: number) =>
    Array.from({ length: rows }, (_, i) => Array.from({ length: cols }, (_, j) => out[offset + i * cols + j]!));

  const gTrees: Expr[] = constraints.map((c, index) => ModelError.inField(`constraints[${index}].expr`, () => expressionTree(c.expr)));
  const constraintOutputs = [
    ...gTrees,
    ...gTrees.flatMap((g) => system.coordinates.map((q) => differentiate(g, q, 0))),
    ...gTrees.map((g) => differentiate(g, "t", 0)),
  ];
  const constraintEvaluator = k > 0 ? compileExpressions(constraintOutputs, variables, { constants: system.parameters }) : null;
  const constraintOut = new Float64Array(constraintOutputs.length);
  const load = (
    q: readonly number[],
    rates: readonly number[],
    accelerations: readonly number[],
    t: number,
    u: readonly number[],
    lambda?: readonly number[],
  ) => {
    for (let i = 0; i < n; i++) {
      values[i] = q[i]!;
      values[n + i] = rates[i]!;
      values[2 * n + i] = accelerations[i]!;
    }
    values[3 * n] = t;
    for (let j = 0; j < m; j++) values[3 * n + 1 + j] = u[j]!;
    for (let j = 0; j < k; j++) values[3 * n + 1 + m + j] = lambda?.[j] ?? 0;
  };
  const zeros = new Array<number>(n).fill(0);
  return {
    n,
    m,
    coordinates: [...system.coordinates],
    multipliers,
    constraintNames: constraints.map((c) => c.name),
    variables,
    evaluator,
    at(q, rates, accelerations, t, u, lambda) {
      load(q, rates, accelerations, t, u, lambda);
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
      const byAll = take(offset, n, m + k);
      return {
        mass,
        forcing,
        byCoordinate,
        byRate,
        byInput: byAll.map((row) => row.slice(0, m)),
        byMultiplier: byAll.map((row) => row.slice(m)),
      };
    },
    constraintsAt(q, t, u) {
      if (constraintEvaluator === null) return { residuals: [], jacobian: [], timeRates: [] };
      load(q, zeros, zeros, t, u);
      constraintEvaluator.evaluate(values, constraintOut);
      return {
        residuals: Array.from(constraintOut.subarray(0, k)),
        jacobian: Array.from({ length: k }, (_, row) => Array.from(constraintOut.subarray(k + row * n, k + (row + 1) * n))),
        timeRates: Array.from(constraintOut.subarray(k + k * n, k + k * n + k)),
      };
    },
  };
}

/**
 * Linearizes q'' = M⁻¹ f about a point: state-space A, B with x = [q; q'],
 * eigenvalues of A, and the undamped natural frequencies and mode shapes.
 * Derivatives are exact (differentiate.ts), evaluated numerically.
 *
 * With position constraints the point must be at rest and the constraints
 * fixed in time there. The multipliers λ₀ and accelerations come from the
 * augmented system; the stiffness then holds λ₀ times the constraints'
 * curvature. Coordinate partitioning picks independent coordinates z (the
 * others follow from A δq = 0, δq = N δz), and the equations are projected
 * with Nᵀ, which removes the multipliers:
 *   NᵀMN δz'' + NᵀCN δz' + NᵀKN δz = −NᵀB_u δu.
 * (The null-space projection of the linearized constrained equations; a fact
 * of the trade, e.g. Géradin & Cardona, Flexible Multibody Dynamics (2001),
 * the linearization of constrained systems, from memory.) It is exact at an
 * equilibrium; at a rest point with q'' ≠ 0 it leaves out the constraints'
 * curvature acting on q''.
 *
 * @example
 * linearizeAbout({ coordinates: ["x"], massMatrix: [["m"]], forcing: ["-k*x"], parameters: { m: 1, k: 4 } }, { q: [0] }).modes[0].radPerSecond // 2
 */
export function linearizeAbout(system: AnalysisSystem | CompiledAnalysis, point: OperatingPoint): Linearization {
  const compiled = "evaluator" in system ? system : compileAnalysis(system);
  if (compiled.multipliers.length > 0) return linearizeConstrained(compiled, point);
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
  return assemble(compiled, mass, stiffness, damping, m > 0 ? new Matrix(e.byInput) : new Matrix(n, 0), accelerations, null, []);
}

/** x = [z; z'], ẋ = A x + B u from M z'' + C z' + K z + B_r u = 0 (B_r = ∂r/∂u), with modes and eigenvalues. */
function assemble(
  compiled: CompiledAnalysis,
  mass: Matrix,
  stiffness: Matrix,
  damping: Matrix,
  byInput: Matrix,
  accelerations: number[],
  basis: Matrix | null,
  multipliers: { symbol: string; value: number }[],
  multiplierRows: (A: Matrix, B: Matrix) => Linearization["multiplierRows"] = () => null,
): Linearization {
  const r = mass.rows;
  const m = compiled.m;
  const names = basis === null ? compiled.coordinates : independentNames(compiled.coordinates, basis);
  const lowerLeft = solveOrThrow(mass, stiffness).neg();
  const lowerRight = solveOrThrow(mass, damping).neg();
  const A = Matrix.zeros(2 * r, 2 * r);
  for (let i = 0; i < r; i++) {
    A.set(i, r + i, 1);
    for (let j = 0; j < r; j++) {
      A.set(r + i, j, lowerLeft.get(i, j));
      A.set(r + i, r + j, lowerRight.get(i, j));
    }
  }
  const B = Matrix.zeros(2 * r, m);
  if (m > 0) {
    const lower = solveOrThrow(mass, byInput).neg();
    for (let i = 0; i < r; i++) for (let k = 0; k < m; k++) B.set(r + i, k, lower.get(i, k));
  }
  const decomposition = new EigenvalueDecomposition(A);
  const eigenvalues = decomposition.realEigenvalues.map((re, i) => ({ re, im: decomposition.imaginaryEigenvalues[i]! }));
  const modes = normalModes(mass, stiffness).map((mode) =>
    basis === null ? mode : { ...mode, shape: normaliseShape(basis.mmul(Matrix.columnVector(mode.shape)).to1DArray()) },
  );
  return {
    coordinates: names,
    basis: basis === null ? null : basis.to2DArray(),
    multipliers,
    multiplierRows: multiplierRows(A, B),
    state: [...names, ...names.map((q) => `${q}'`)],
    inputs: compiled.variables.slice(3 * compiled.n + 1, 3 * compiled.n + 1 + m),
    A: A.to2DArray(),
    B: B.to2DArray(),
    massMatrix: mass.to2DArray(),
    stiffness: stiffness.to2DArray(),
    damping: damping.to2DArray(),
    accelerations,
    eigenvalues,
    modes,
  };
}

/** The coordinates whose rows of N are rows of the identity: the independent ones, in N's column order. */
function independentNames(coordinates: readonly string[], basis: Matrix): string[] {
  return Array.from({ length: basis.columns }, (_, j) => {
    const i = coordinates.findIndex((_, row) => basis.get(row, j) === 1 && basis.getRow(row).every((x, c) => c === j || x === 0));
    return coordinates[i]!;
  });
}

/** Relative size of a pivot (to the largest |A| entry) below which a constraint row counts as dependent. */
const CONSTRAINT_RANK_TOLERANCE = 1e-10;

/**
 * Coordinate partitioning of A δq = 0 (k×n, full row rank): Gaussian
 * elimination with complete pivoting picks k dependent coordinates (largest
 * pivots), the rest are independent; returns N (n×(n−k)) with δq = N δz.
 * Throws ModelError naming the constraint whose row depends on the others.
 */
export function constraintBasis(jacobian: readonly (readonly number[])[], constraintNames: readonly string[]): Matrix {
  const k = jacobian.length;
  const n = jacobian[0]?.length ?? 0;
  const a = jacobian.map((row) => [...row]);
  const rows = Array.from({ length: k }, (_, i) => i);
  const scale = Math.max(1e-300, ...jacobian.flat().map(Math.abs));
  const dependent: number[] = [];
  const free = new Set(Array.from({ length: n }, (_, j) => j));
  for (let step = 0; step < k; step++) {
    let best = { row: -1, col: -1, size: 0 };
    for (let i = step; i < k; i++) {
      for (const j of free) {
        const size = Math.abs(a[rows[i]!]![j]!);
        if (size > best.size) best = { row: i, col: j, size };
      }
    }
    if (best.size <= CONSTRAINT_RANK_TOLERANCE * scale) {
      const index = rows[step]!;
      throw new ModelError(
        "singular",
        `constraints[${index}]`,
        `constraint "${constraintNames[index]}" is redundant with the others at this point (the constraint matrix loses rank), so the independent coordinates are not defined`,
      );
    }
    [rows[step], rows[best.row]] = [rows[best.row]!, rows[step]!];
    const pivotRow = a[rows[step]!]!;
    for (let i = step + 1; i < k; i++) {
      const row = a[rows[i]!]!;
      const factor = row[best.col]! / pivotRow[best.col]!;
      for (let j = 0; j < n; j++) row[j]! -= factor * pivotRow[j]!;
    }
    dependent.push(best.col);
    free.delete(best.col);
  }
  const independent = [...free].sort((x, y) => x - y);
  // δq_D = −A_D⁻¹ A_I δq_I with the original rows.
  const full = new Matrix(jacobian.map((row) => [...row]));
  const aD = new Matrix(k, k);
  const aI = new Matrix(k, independent.length);
  for (let i = 0; i < k; i++) {
    dependent.forEach((col, c) => aD.set(i, c, full.get(i, col)));
    independent.forEach((col, c) => aI.set(i, c, full.get(i, col)));
  }
  const follow = k > 0 && independent.length > 0 ? new LuDecomposition(aD).solve(aI).neg() : new Matrix(k, independent.length);
  const basis = new Matrix(n, independent.length);
  independent.forEach((col, c) => basis.set(col, c, 1));
  dependent.forEach((col, d) => {
    for (let c = 0; c < independent.length; c++) basis.set(col, c, follow.get(d, c));
  });
  return basis;
}

/** See linearizeAbout: the constrained case. */
function linearizeConstrained(compiled: CompiledAnalysis, point: OperatingPoint): Linearization {
  const { n, m } = compiled;
  const k = compiled.multipliers.length;
  const zeros = new Array<number>(n).fill(0);
  const u = point.inputs ?? new Array<number>(m).fill(0);
  const t = point.t ?? 0;
  if (point.rates && point.rates.some((v) => v !== 0)) {
    throw new ModelError("schema", "rates", "a model with constraints is linearized about a state at rest (all rates zero)");
  }
  const { jacobian, timeRates } = compiled.constraintsAt(point.q, t, u);
  const moving = timeRates.findIndex((v, i) => Math.abs(v) > 1e-12 * Math.max(1, ...jacobian[i]!.map(Math.abs)));
  if (moving >= 0) {
    throw new ModelError(
      "schema",
      `constraints[${moving}]`,
      `constraint "${compiled.constraintNames[moving]}" moves with time at this point; the linearization needs constraints fixed in time`,
    );
  }
  const basis = constraintBasis(jacobian, compiled.constraintNames);
  // [M −Aᵀ; A 0][q''; λ] = [f₀; 0] at rest with fixed constraints (constraints.ts's convention).
  const base = compiled.at(point.q, zeros, zeros, t, u);
  let accelerations: number[];
  let lambda: number[];
  if (point.multipliers) {
    lambda = [...point.multipliers];
    const withLambda = compiled.at(point.q, zeros, zeros, t, u, lambda);
    accelerations = solveOrThrow(new Matrix(withLambda.mass), Matrix.columnVector(withLambda.forcing)).to1DArray();
  } else {
    const augmented = Matrix.zeros(n + k, n + k);
    const rhs = Matrix.zeros(n + k, 1);
    for (let i = 0; i < n; i++) {
      for (let j = 0; j < n; j++) augmented.set(i, j, base.mass[i]![j]!);
      // ∂r/∂λ = −Aᵀ: the column of λ_j in row i.
      for (let j = 0; j < k; j++) augmented.set(i, n + j, base.byMultiplier[i]![j]!);
      rhs.set(i, 0, base.forcing[i]!);
    }
    for (let i = 0; i < k; i++) for (let j = 0; j < n; j++) augmented.set(n + i, j, jacobian[i]![j]!);
    const solution = solveOrThrow(augmented, rhs).to1DArray();
    accelerations = solution.slice(0, n);
    lambda = solution.slice(n);
  }
  const e = compiled.at(point.q, zeros, accelerations, t, u, lambda);
  const project = (matrix: Matrix) => basis.transpose().mmul(matrix).mmul(basis);
  const mass = project(new Matrix(e.mass));
  const stiffness = project(new Matrix(e.byCoordinate));
  const damping = project(new Matrix(e.byRate));
  const byInput = basis.transpose().mmul(m > 0 ? new Matrix(e.byInput) : new Matrix(n, 0));
  const multipliers = compiled.multipliers.map((symbol, i) => ({ symbol, value: lambda[i]! }));
  // Aᵀ δλ = M δq'' + K δq + C δq' + B_u δu with δq = N z, δq' = N z', δq'' = N (A₂ x + B₂ u),
  // consistent by construction; δλ = (A Aᵀ)⁻¹ A (…).
  const multiplierRows = (stateMatrix: Matrix, inputMatrix: Matrix) => {
    const r = basis.columns;
    const a = new Matrix(jacobian);
    const lowerA = stateMatrix.subMatrix(r, 2 * r - 1, 0, 2 * r - 1);
    const fullMass = new Matrix(e.mass);
    const byState = fullMass.mmul(basis).mmul(lowerA);
    const K = new Matrix(e.byCoordinate).mmul(basis);
    const C = new Matrix(e.byRate).mmul(basis);
    for (let i = 0; i < n; i++) {
      for (let j = 0; j < r; j++) {
        byState.set(i, j, byState.get(i, j) + K.get(i, j));
        byState.set(i, r + j, byState.get(i, r + j) + C.get(i, j));
      }
    }
    const solver = new LuDecomposition(a.mmul(a.transpose()));
    const stateRows = solver.solve(a.mmul(byState));
    let inputRows = new Matrix(k, 0);
    if (m > 0) {
      const lowerB = inputMatrix.subMatrix(r, 2 * r - 1, 0, m - 1);
      inputRows = solver.solve(a.mmul(fullMass.mmul(basis).mmul(lowerB).add(new Matrix(e.byInput))));
    }
    return { byState: stateRows.to2DArray(), byInput: inputRows.to2DArray() };
  };
  return assemble(compiled, mass, stiffness, damping, byInput, accelerations, basis, multipliers, multiplierRows);
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
