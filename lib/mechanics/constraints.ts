import { compileExpressions, type MassMatrixSystem } from "./compile";
import { ModelError } from "./errors";
import type { Expr } from "./expr/ast";
import type { ExpressionSource } from "./expr/parse";

/**
 * Constraints and their multipliers (Lagrange's method with multipliers).
 *
 * Convention. A position constraint g_k(q, t) = 0 augments L by λ_k g_k, so
 * the residual of coordinate q gains −λ_k ∂g_k/∂q. A rate constraint
 * Σ_j a_kj q_j' + a_k0 = 0 contributes −μ_k a_kq. With A the rows ∂g_k/∂q
 * and a_kj, the equations are M q'' − Aᵀ λ = f₀ (f₀: the forcing without
 * multiplier terms) and, differentiated in time, A q'' = −(Ȧ q' + ȧ₀)
 * ("bias"), so the augmented system is
 *
 *   [M  −Aᵀ] [q'']   [ f₀            ]
 *   [A   0 ] [λ  ] = [ −(Ȧ q' + ȧ₀)  ]
 *
 * (the form [M Aᵀ; A 0][q''; λ] = [f; −(Ȧq' + ȧ₀)] with the multipliers'
 * sign fixed by the residual convention above). The multiplier symbols in
 * the equations are `lambda_<name>` and `mu_<name>`; `forcing` carries their
 * terms (+λ_k ∂g_k/∂q), so residual = M q'' − forcing still holds.
 */
export type ConstraintKind = "position" | "rate";

/** The multiplier symbol of a constraint as it appears in the equations. */
export function multiplierSymbol(kind: ConstraintKind, name: string): string {
  return `${kind === "position" ? "lambda" : "mu"}_${name}`;
}

/** One constraint after derivation (expression trees; printed in print.ts). */
export interface ConstraintResult {
  name: string;
  kind: ConstraintKind;
  /** `lambda_<name>` or `mu_<name>`. */
  symbol: string;
  /** The constraint expression (= 0), canonical. */
  expr: Expr;
  /** Row k of A: ∂g_k/∂q_j (position) or a_kj (rate), one per coordinate. */
  jacobian: Expr[];
  /** −(Ȧ q' + ȧ₀)_k: the right-hand side of A q'' = bias. */
  bias: Expr;
  /** λ_k or μ_k in closed form (canonical, cancelled), or null where none was produced. */
  multiplier: Expr | null;
  /** `multiplier` in display form, or null. */
  display: Expr | null;
  /** Why `multiplier` is null. */
  reason?: string;
  /** Unit of the multiplier, over base symbols (`kg*m/s^2 (N)`). */
  unit: string;
}

/** A model output after derivation: definitions expanded, canonical. */
export interface OutputResult {
  name: string;
  expr: Expr;
  display: Expr;
  unit: string;
}

/** A constraint row for numeric work: text (worker boundary) or trees. */
export interface ConstraintRow {
  name: string;
  kind: ConstraintKind;
  /** `lambda_<name>` / `mu_<name>`. */
  symbol: string;
  /** g_k (position, may use q, t) or the rate expression (may use q, q', t). */
  expr: ExpressionSource;
  /** Row of A, one expression per coordinate. */
  jacobian: readonly ExpressionSource[];
  /** A q'' = bias. */
  bias: ExpressionSource;
}

/**
 * A constrained system for numeric work. `forcing` is the printed f, which
 * contains the multiplier symbols; the evaluator sets them to zero for f₀.
 */
export interface ConstrainedSystem extends MassMatrixSystem {
  constraints: readonly ConstraintRow[];
  /** Outputs in coordinates, rates, accelerations, multipliers, t and inputs. */
  outputs?: readonly { name: string; expr: ExpressionSource }[];
}

/** The augmented system solved at one state. */
export interface ConstrainedSolution {
  accelerations: number[];
  /** λ / μ in the order of `constraints`. */
  multipliers: number[];
}

/** A redundant or inconsistent constraint found at a state (see checkConstraintIndependence). */
export interface ConstraintDependence {
  /** Index into `constraints`. */
  index: number;
  name: string;
  kind: "redundant" | "inconsistent";
  /** The earlier constraints its row of A is a combination of. */
  combinationOf: string[];
  message: string;
}

/** Numeric evaluator of a constrained system (the fallback where no closed form was produced, and the simulator's right-hand side). */
export interface CompiledConstrainedSystem {
  readonly coordinates: readonly string[];
  readonly constraints: readonly ConstraintRow[];
  /** Multiplier symbols in constraint order. */
  readonly multipliers: readonly string[];
  readonly outputNames: readonly string[];
  /**
   * Solves [M Aᵀ; A 0] at (q, q', t, u) for q'' and the multipliers.
   * Throws ModelError("singular", "constraints[k]" | "rateConstraints[k]" | "massMatrix", …)
   * naming the constraint that makes the system singular.
   */
  solve(q: ArrayLike<number>, rates: ArrayLike<number>, t: number, u?: ArrayLike<number>): ConstrainedSolution;
  /** g_k(q, t) for the position constraints, in their order (rate constraints have no position residual). */
  positionResiduals(q: ArrayLike<number>, t: number, u?: ArrayLike<number>): number[];
  /** The velocity-level residual A q' + a₀ of every constraint, in constraint order. */
  rateResiduals(q: ArrayLike<number>, rates: ArrayLike<number>, t: number, u?: ArrayLike<number>): number[];
  /** A at (q, t), m×n (rows in constraint order). */
  jacobian(q: ArrayLike<number>, t: number, u?: ArrayLike<number>): number[][];
  /** The outputs at a state with its accelerations and multipliers (from `solve`). */
  outputs(q: ArrayLike<number>, rates: ArrayLike<number>, solution: ConstrainedSolution, t: number, u?: ArrayLike<number>): number[];
  /** The first redundant or inconsistent constraint at a state, or null when A has full row rank. */
  checkIndependence(q: ArrayLike<number>, rates: ArrayLike<number>, t: number, u?: ArrayLike<number>): ConstraintDependence | null;
}

/** Field path of constraint `index` of a system (`constraints[0]`, `rateConstraints[1]`). */
export function constraintField(constraints: readonly { kind: ConstraintKind }[], index: number): string {
  const kind = constraints[index]!.kind;
  let k = 0;
  for (let i = 0; i < index; i++) if (constraints[i]!.kind === kind) k++;
  return `${kind === "position" ? "constraints" : "rateConstraints"}[${k}]`;
}

/**
 * Compiles a constrained system once for many evaluations.
 *
 * @example
 * const sys = compileConstrainedSystem({ coordinates: ["x", "y"], massMatrix: [["m", "0"], ["0", "m"]],
 *   forcing: ["2*x*lambda_rod", "-m*g + 2*y*lambda_rod"], parameters: { m: 1, g: 9.81, l: 1 },
 *   constraints: [{ name: "rod", kind: "position", symbol: "lambda_rod", expr: "x^2 + y^2 - l^2",
 *     jacobian: ["2*x", "2*y"], bias: "-2*x'^2 - 2*y'^2" }] });
 * sys.solve([0, -1], [1, 0], 0).multipliers[0] // −(m g + m v²/l)/(2 l) = −5.405
 */
export function compileConstrainedSystem(system: ConstrainedSystem): CompiledConstrainedSystem {
  void compileExpressions;
  void system;
  throw new ModelError("unsupported", "constraints", "not available yet");
}

/**
 * The ConstrainedSystem of a printed derivation with parameter values, for
 * compileConstrainedSystem (the numeric fallback where `multiplier` is null,
 * and the simulator's right-hand side).
 *
 * @example compileConstrainedSystem(constrainedSystemOf(printed, { m: 1, g: 9.81, l: 1 }, ["F"]))
 */
export function constrainedSystemOf(
  printed: {
    coordinates: string[];
    massMatrix: string[][];
    forcing: string[];
    constraints: readonly { name: string; kind: ConstraintKind; symbol: string; expr: string; jacobian: string[]; bias: string }[];
    outputs: readonly { name: string; expr: string }[];
  },
  parameters: Readonly<Record<string, number>>,
  inputs: readonly string[] = [],
): ConstrainedSystem {
  return {
    coordinates: printed.coordinates,
    inputs,
    massMatrix: printed.massMatrix,
    forcing: printed.forcing,
    parameters,
    constraints: printed.constraints.map(({ name, kind, symbol, expr, jacobian, bias }) => ({ name, kind, symbol, expr, jacobian, bias })),
    outputs: printed.outputs.map(({ name, expr }) => ({ name, expr })),
  };
}
