import { differentiate, dependsOn } from "../mechanics/differentiate";
import type { Expr } from "../mechanics/expr/ast";
import { expressionTree } from "../mechanics/expr/parse";
import { createLuWorkspace, solveInPlace, type LuWorkspace } from "../numeric/linear-solve";
import { SingularMatrixError } from "../numeric/errors";
import { SimulationSetupError } from "./errors";
import { multiplierSymbol, type ConstraintKind, type ConstraintSpec } from "./specs";
import { compileLocated, type ExpressionCompiler, type ExpressionEvaluator } from "./system";

/**
 * Constraints of a simulated system and what the integrator does with them.
 *
 * A position constraint g_k(q, t) = 0 and a rate constraint
 * Σ_j a_kj(q, t) q_j' + a_k0(q, t) = 0 both enter the equations of motion
 * through their rows of A (∂g_k/∂q_j, or a_kj) and a multiplier:
 *
 *     M q'' = f + Aᵀ λ        (L augmented by Σ λ_k g_k; the residual gains −Σ λ_k ∂g_k/∂q)
 *     A q'' = −c              (the constraints differentiated down to accelerations)
 *
 * c_k collects what the time derivative of the velocity-level constraint holds
 * besides A q'': Ȧ q' + ȧ_0. The integrator solves this index-1 system for q''
 * and λ together at every right-hand-side call (`solveAugmented`), and pulls
 * the state back onto g = 0 and A q' + a_0 = 0 at every output time
 * (`projectState`), because the index reduction only holds the constraints'
 * second derivative at zero and the positions would otherwise drift away
 * quadratically in time.
 */

// ---------------------------------------------------------------------------
// Trees for the derivatives (evaluated only, so no simplification beyond the builders' own)

const at = { start: 0, end: 0 };
const sym = (name: string, order: 0 | 1 | 2): Expr => ({ kind: "sym", name, order, ...at });
const isZero = (e: Expr) => e.kind === "num" && e.value === 0;
const add = (a: Expr, b: Expr): Expr => (isZero(a) ? b : isZero(b) ? a : { kind: "bin", op: "+", left: a, right: b, ...at });
const mul = (a: Expr, b: Expr): Expr => (isZero(a) || isZero(b) ? { kind: "num", value: 0, ...at } : { kind: "bin", op: "*", left: a, right: b, ...at });
const ZERO: Expr = { kind: "num", value: 0, ...at };

/** The derivative along the motion of an expression of q, q' and t, without its q'' part: Σ_j ∂e/∂q_j q_j' + ∂e/∂t. */
function convectiveDerivative(expr: Expr, coordinates: readonly string[]): Expr {
  let sum = differentiate(expr, "t", 0);
  for (const q of coordinates) sum = add(sum, mul(differentiate(expr, q, 0), sym(q, 1)));
  return sum;
}

/** The expressions the integrator evaluates for one constraint. */
interface ConstraintExpressions {
  /** n entries: row k of A. */
  row: Expr[];
  /** A_k q' + a_k0: zero on the motion. */
  rate: Expr;
  /** c_k = Ȧ_k q' + ȧ_k0. */
  convective: Expr;
  /** g_k for a position constraint; 0 for a rate constraint. */
  position: Expr;
}

function constraintExpressions(spec: ConstraintSpec, coordinates: readonly string[]): ConstraintExpressions {
  const field = `constraints.${spec.name}`;
  let tree: Expr;
  try {
    tree = expressionTree(spec.expr);
  } catch (error) {
    throw new SimulationSetupError("expression", field, error instanceof Error ? error.message : String(error));
  }
  for (const q of coordinates) {
    if (dependsOn(tree, q, 2))
      throw new SimulationSetupError(
        "constraint",
        field,
        `the constraint "${spec.name}" holds an acceleration (${q}''); constraints are on positions or rates`,
      );
    if (spec.kind === "position" && dependsOn(tree, q, 1)) {
      throw new SimulationSetupError(
        "constraint",
        field,
        `the position constraint "${spec.name}" holds the rate ${q}'; a constraint on rates belongs with the rate constraints`,
      );
    }
  }
  if (spec.kind === "position") {
    const row = coordinates.map((q) => differentiate(tree, q, 0));
    // ġ = A q' + ∂g/∂t: zero on the motion, and the expression c comes from.
    let rate = differentiate(tree, "t", 0);
    coordinates.forEach((q, j) => {
      rate = add(rate, mul(row[j]!, sym(q, 1)));
    });
    return { row, rate, convective: convectiveDerivative(rate, coordinates), position: tree };
  }
  // Linear in the rates: a_kj = ∂e/∂q_j', and the rest of ė is the convective part.
  const row = coordinates.map((q) => differentiate(tree, q, 1));
  return { row, rate: tree, convective: convectiveDerivative(tree, coordinates), position: ZERO };
}

// ---------------------------------------------------------------------------

/** Why the constraints cannot be solved at a state; names the constraint at fault. */
export interface ConstraintDiagnosis {
  /** The constraint that adds nothing new to the ones before it (redundant, or contradicting them). */
  constraint: string;
  message: string;
}

/**
 * Finds the first constraint whose row of A is (numerically) a combination of
 * the rows before it, by Gram–Schmidt on the rows; null when A has full row rank.
 */
export function dependentConstraint(jacobian: Float64Array, names: readonly string[], n: number, tolerance = 1e-9): ConstraintDiagnosis | null {
  const m = names.length;
  const basis: Float64Array[] = [];
  const used: string[] = [];
  for (let k = 0; k < m; k++) {
    const row = jacobian.slice(k * n, k * n + n);
    let norm = 0;
    for (let j = 0; j < n; j++) norm += row[j]! * row[j]!;
    norm = Math.sqrt(norm);
    if (!Number.isFinite(norm)) return { constraint: names[k]!, message: `the constraint "${names[k]}" has a non-finite gradient here` };
    if (norm === 0) {
      return {
        constraint: names[k]!,
        message: `the constraint "${names[k]}" does not depend on the coordinates here (its gradient is zero), so it cannot be held`,
      };
    }
    for (let pass = 0; pass < 2; pass++) {
      for (const b of basis) {
        let dot = 0;
        for (let j = 0; j < n; j++) dot += row[j]! * b[j]!;
        for (let j = 0; j < n; j++) row[j]! -= dot * b[j]!;
      }
    }
    let left = 0;
    for (let j = 0; j < n; j++) left += row[j]! * row[j]!;
    left = Math.sqrt(left);
    if (left <= tolerance * norm) {
      const others = used.length > 0 ? ` ${used.map((name) => `"${name}"`).join(", ")}` : "";
      return {
        constraint: names[k]!,
        message: `the constraint "${names[k]}" is not independent of${others || " the others"} here: it is redundant or contradicts them; remove it or restate the set`,
      };
    }
    for (let j = 0; j < n; j++) row[j]! /= left;
    basis.push(row);
    used.push(names[k]!);
    if (basis.length === n && k < m - 1) {
      return {
        constraint: names[k + 1]!,
        message: `${m} constraints on ${n} coordinates leave no motion: the constraint "${names[k + 1]}" is one too many`,
      };
    }
  }
  return null;
}

/** Raised inside the integrator when the augmented system has no solution; never escapes lib/simulate. */
export class ConstraintFailure extends Error {
  constructor(
    readonly reason: "singular_constraints" | "singular_mass_matrix" | "non_finite_state",
    message: string,
    readonly constraint: string | null,
  ) {
    super(message);
    this.name = "ConstraintFailure";
  }
}

/** Correction made by one projection, in the coordinates' and rates' own units (largest entry). */
export interface ProjectionStep {
  coordinates: number;
  rates: number;
  /** Largest |g_k| before the projection, and after. */
  positionBefore: number;
  positionAfter: number;
  /** Largest |A_k q' + a_k0| before the projection, and after. */
  rateBefore: number;
  rateAfter: number;
}

const PROJECTION_ITERATIONS = 25;

/**
 * The compiled constraint set of one run. All evaluators read the packed
 * variable vector [q, q', t, u, p] of the system.
 */
export class ConstraintSet {
  readonly names: readonly string[];
  readonly kinds: readonly ConstraintKind[];
  readonly multiplierNames: readonly string[];
  /** True when some constraint names t: the energy function is then no constant of the motion. */
  readonly explicitTime: boolean;
  readonly m: number;
  private readonly n: number;
  private readonly positionRows: number[];
  private readonly evaluator: ExpressionEvaluator;
  /** [A (m×n), A q' + a₀ (m), c (m), g (m)]. */
  private readonly buffer: Float64Array;
  private readonly augmented: LuWorkspace;
  private readonly rhs: Float64Array;
  private readonly positionNormal: LuWorkspace | null;
  private readonly rateNormal: LuWorkspace;
  private readonly small: Float64Array;

  constructor(specs: readonly ConstraintSpec[], coordinates: readonly string[], variables: readonly string[], compile?: ExpressionCompiler) {
    const n = coordinates.length;
    const m = specs.length;
    const seen = new Set<string>();
    for (const spec of specs) {
      if (seen.has(spec.name)) throw new SimulationSetupError("constraint", `constraints.${spec.name}`, `two constraints are named "${spec.name}"`);
      seen.add(spec.name);
    }
    if (m >= n + 1) {
      throw new SimulationSetupError(
        "constraint",
        `constraints.${specs[n]!.name}`,
        `${m} constraints on ${n} coordinates leave no motion: the constraint "${specs[n]!.name}" is one too many`,
      );
    }
    this.n = n;
    this.m = m;
    this.names = specs.map((s) => s.name);
    this.kinds = specs.map((s) => s.kind);
    this.multiplierNames = specs.map(multiplierSymbol);
    this.positionRows = specs.flatMap((s, k) => (s.kind === "position" ? [k] : []));
    const parts = specs.map((spec) => constraintExpressions(spec, coordinates));
    this.explicitTime = specs.some((spec) => dependsOn(expressionTree(spec.expr), "t", 0));
    const expressions = [...parts.flatMap((p) => p.row), ...parts.map((p) => p.rate), ...parts.map((p) => p.convective), ...parts.map((p) => p.position)];
    const fields = [
      ...specs.flatMap((s) => coordinates.map((q) => `constraints.${s.name} (∂/∂${q})`)),
      ...specs.map((s) => `constraints.${s.name} (rate)`),
      ...specs.map((s) => `constraints.${s.name} (acceleration)`),
      ...specs.map((s) => `constraints.${s.name}`),
    ];
    this.evaluator = compileLocated(expressions, fields, [...variables], compile);
    this.buffer = new Float64Array(m * n + 3 * m);
    this.augmented = createLuWorkspace(n + m);
    this.rhs = new Float64Array(n + m);
    this.positionNormal = this.positionRows.length > 0 ? createLuWorkspace(this.positionRows.length) : null;
    this.rateNormal = createLuWorkspace(m);
    this.small = new Float64Array(Math.max(m, 1));
  }

  /** Evaluates A, the rate residuals, c and g at the packed values. */
  private evaluate(values: Float64Array): void {
    this.evaluator.evaluate(values, this.buffer);
  }

  private get rateOffset() {
    return this.m * this.n;
  }

  /**
   * Solves [M −Aᵀ; A 0] [q''; λ] = [f; −c] at the packed values, with M and f
   * already in `massForcing` (M row-major, then f). Writes q'' to `acc` and λ
   * to `multipliers`. Throws `ConstraintFailure` naming the constraint at fault.
   */
  solveAugmented(values: Float64Array, massForcing: Float64Array, acc: Float64Array, multipliers: Float64Array): void {
    const { n, m } = this;
    const size = n + m;
    this.evaluate(values);
    const a = this.augmented.matrix;
    const b = this.rhs;
    const buffer = this.buffer;
    const convective = this.rateOffset + m;
    for (let i = 0; i < n; i++) {
      for (let j = 0; j < n; j++) a[i * size + j] = massForcing[i * n + j]!;
      for (let k = 0; k < m; k++) a[i * size + n + k] = -buffer[k * n + i]!;
      b[i] = massForcing[n * n + i]!;
    }
    for (let k = 0; k < m; k++) {
      const row = (n + k) * size;
      for (let j = 0; j < n; j++) a[row + j] = buffer[k * n + j]!;
      for (let l = 0; l < m; l++) a[row + n + l] = 0;
      b[n + k] = -buffer[convective + k]!;
    }
    try {
      solveInPlace(this.augmented, b);
    } catch (error) {
      if (!(error instanceof SingularMatrixError)) throw error;
      if (error.nonFinite) throw new ConstraintFailure("non_finite_state", "the mass matrix or a constraint gradient is not finite", null);
      const diagnosis = dependentConstraint(buffer.subarray(0, m * n), this.names, n);
      if (diagnosis) throw new ConstraintFailure("singular_constraints", diagnosis.message, diagnosis.constraint);
      throw new ConstraintFailure("singular_mass_matrix", "the mass matrix is singular on the constraints", null);
    }
    for (let i = 0; i < n; i++) acc[i] = b[i]!;
    for (let k = 0; k < m; k++) multipliers[k] = b[n + k]!;
  }

  /** Writes each constraint's residual (g_k, or the rate residual of a rate constraint) and each rate-level residual. */
  residuals(values: Float64Array, position: Float64Array, rate: Float64Array): void {
    this.evaluate(values);
    const { m } = this;
    const rateOffset = this.rateOffset;
    const positionOffset = rateOffset + 2 * m;
    for (let k = 0; k < m; k++) {
      rate[k] = this.buffer[rateOffset + k]!;
      position[k] = this.kinds[k] === "position" ? this.buffer[positionOffset + k]! : this.buffer[rateOffset + k]!;
    }
  }

  /**
   * Moves the state in `values` (q, then q') onto the constraints: positions by
   * Gauss–Newton steps of least change, Δq = −Jᵀ (J Jᵀ)⁻¹ g over the position
   * constraints, then rates by the one linear step Δq' = −Aᵀ (A Aᵀ)⁻¹ (A q' + a₀).
   * Least change in the coordinates as written (Euclidean), which suits a state
   * already within the integration tolerance of the constraints.
   *
   * Throws `ConstraintFailure` when the constraints are dependent here or the
   * positions cannot be brought onto them.
   */
  projectState(values: Float64Array, positionTolerance: number): ProjectionStep {
    const { n, m } = this;
    const buffer = this.buffer;
    const rows = this.positionRows;
    const p = rows.length;
    const positionOffset = this.rateOffset + 2 * m;
    const start = Float64Array.from(values.subarray(0, 2 * n));
    this.evaluate(values);
    const residualMax = () => {
      let worst = 0;
      for (const k of rows) worst = Math.max(worst, Math.abs(buffer[positionOffset + k]!));
      return worst;
    };
    const positionBefore = residualMax();
    let positionAfter = positionBefore;
    if (p > 0) {
      const workspace = this.positionNormal!;
      const y = this.small;
      let previous = Infinity;
      for (let iteration = 0; iteration < PROJECTION_ITERATIONS && positionAfter > positionTolerance; iteration++) {
        this.normalMatrix(workspace, rows);
        for (let r = 0; r < p; r++) y[r] = buffer[positionOffset + rows[r]!]!;
        this.solveNormal(workspace, y.subarray(0, p), rows);
        for (let j = 0; j < n; j++) {
          let step = 0;
          for (let r = 0; r < p; r++) step += buffer[rows[r]! * n + j]! * y[r]!;
          values[j]! -= step;
        }
        this.evaluate(values);
        positionAfter = residualMax();
        if (!(positionAfter < previous)) break;
        previous = positionAfter;
      }
      if (!Number.isFinite(positionAfter)) throw new ConstraintFailure("non_finite_state", "a constraint is not finite near this state", null);
    }
    // Rates: one linear step onto A q' + a₀ = 0 at the projected positions.
    const rateOffset = this.rateOffset;
    let rateBefore = 0;
    for (let k = 0; k < m; k++) rateBefore = Math.max(rateBefore, Math.abs(buffer[rateOffset + k]!));
    const all = this.names.map((_, k) => k);
    this.normalMatrix(this.rateNormal, all);
    const y = this.small;
    for (let k = 0; k < m; k++) y[k] = buffer[rateOffset + k]!;
    this.solveNormal(this.rateNormal, y.subarray(0, m), all);
    for (let j = 0; j < n; j++) {
      let step = 0;
      for (let k = 0; k < m; k++) step += buffer[k * n + j]! * y[k]!;
      values[n + j]! -= step;
    }
    this.evaluate(values);
    let rateAfter = 0;
    for (let k = 0; k < m; k++) rateAfter = Math.max(rateAfter, Math.abs(buffer[rateOffset + k]!));
    let coordinates = 0;
    let rates = 0;
    for (let j = 0; j < n; j++) {
      coordinates = Math.max(coordinates, Math.abs(values[j]! - start[j]!));
      rates = Math.max(rates, Math.abs(values[n + j]! - start[n + j]!));
    }
    return { coordinates, rates, positionBefore, positionAfter, rateBefore, rateAfter };
  }

  /** Names the worst position constraint at the values (after `projectState`): the one farthest from zero. */
  worstPositionConstraint(values: Float64Array): { name: string; residual: number } | null {
    this.evaluate(values);
    const offset = this.rateOffset + 2 * this.m;
    let worst: { name: string; residual: number } | null = null;
    for (const k of this.positionRows) {
      const residual = this.buffer[offset + k]!;
      if (worst === null || Math.abs(residual) > Math.abs(worst.residual)) worst = { name: this.names[k]!, residual };
    }
    return worst;
  }

  /** Fills the workspace with J Jᵀ over the given constraint rows of the current A. */
  private normalMatrix(workspace: LuWorkspace, rows: readonly number[]): void {
    const { n } = this;
    const size = rows.length;
    const buffer = this.buffer;
    for (let r = 0; r < size; r++) {
      for (let s = 0; s < size; s++) {
        let dot = 0;
        for (let j = 0; j < n; j++) dot += buffer[rows[r]! * n + j]! * buffer[rows[s]! * n + j]!;
        workspace.matrix[r * size + s] = dot;
      }
    }
  }

  private solveNormal(workspace: LuWorkspace, y: Float64Array, rows: readonly number[]): void {
    try {
      solveInPlace(workspace, y);
    } catch (error) {
      if (!(error instanceof SingularMatrixError)) throw error;
      const { n } = this;
      const jacobian = new Float64Array(rows.length * n);
      rows.forEach((k, r) => jacobian.set(this.buffer.subarray(k * n, k * n + n), r * n));
      const diagnosis = dependentConstraint(
        jacobian,
        rows.map((k) => this.names[k]!),
        n,
      ) ?? { constraint: this.names[rows[0]!]!, message: "the constraints are not independent here" };
      throw new ConstraintFailure("singular_constraints", diagnosis.message, diagnosis.constraint);
    }
  }
}
