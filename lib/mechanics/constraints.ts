import { compileExpressions, type MassMatrixSystem } from "./compile";
import { SingularMatrixError } from "../numeric/errors";
import { createLuWorkspace, solveInPlace } from "../numeric/linear-solve";
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
  const n = system.coordinates.length;
  const inputs = system.inputs ?? [];
  const p = inputs.length;
  const constraints = system.constraints;
  const m = constraints.length;
  const outputs = system.outputs ?? [];
  if (system.massMatrix.length !== n || system.massMatrix.some((row) => row.length !== n) || system.forcing.length !== n) {
    throw new RangeError(`mass matrix must be ${n}×${n} and forcing of length ${n}`);
  }
  if (constraints.some((c) => c.jacobian.length !== n)) throw new RangeError(`every constraint row must have ${n} entries`);
  const multipliers = constraints.map((c) => c.symbol);
  const variables = [
    ...system.coordinates,
    ...system.coordinates.map((q) => `${q}'`),
    ...system.coordinates.map((q) => `${q}''`),
    "t",
    ...inputs,
    ...multipliers,
  ];
  const options = { constants: system.parameters };
  const core = compileExpressions(
    [...system.massMatrix.flat(), ...system.forcing, ...constraints.flatMap((c) => c.jacobian), ...constraints.map((c) => c.bias)],
    variables,
    options,
  );
  const values = compileExpressions(
    constraints.map((c) => c.expr),
    variables,
    options,
  );
  const outputEvaluator = compileExpressions(
    outputs.map((o) => o.expr),
    variables,
    options,
  );
  const slots = new Float64Array(variables.length);
  const coreOut = new Float64Array(n * n + n + m * n + m);
  const valueOut = new Float64Array(m);
  const outputOut = new Float64Array(outputs.length);
  const N = n + m;
  const lu = N > 0 ? createLuWorkspace(N) : null;
  const rhs = new Float64Array(N);

  const load = (
    q: ArrayLike<number>,
    rates: ArrayLike<number> | null,
    t: number,
    u: ArrayLike<number> | undefined,
    accelerations?: ArrayLike<number>,
    lambdas?: ArrayLike<number>,
  ) => {
    slots.fill(0);
    for (let i = 0; i < n; i++) {
      slots[i] = q[i]!;
      slots[n + i] = rates ? rates[i]! : 0;
      slots[2 * n + i] = accelerations ? accelerations[i]! : 0;
    }
    slots[3 * n] = t;
    for (let k = 0; k < p; k++) slots[3 * n + 1 + k] = u ? u[k]! : 0;
    for (let k = 0; k < m; k++) slots[3 * n + 1 + p + k] = lambdas ? lambdas[k]! : 0;
  };
  const rowsOf = (): number[][] => Array.from({ length: m }, (_, k) => Array.from({ length: n }, (_, j) => coreOut[n * n + n + k * n + j]!));

  const compiled: CompiledConstrainedSystem = {
    coordinates: system.coordinates,
    constraints,
    multipliers,
    outputNames: outputs.map((o) => o.name),
    solve(q, rates, t, u) {
      load(q, rates, t, u);
      core.evaluate(slots, coreOut);
      const a = lu!.matrix;
      a.fill(0);
      for (let i = 0; i < n; i++) {
        for (let j = 0; j < n; j++) a[i * N + j] = coreOut[i * n + j]!;
        rhs[i] = coreOut[n * n + i]!;
      }
      for (let k = 0; k < m; k++) {
        for (let j = 0; j < n; j++) {
          const entry = coreOut[n * n + n + k * n + j]!;
          a[j * N + n + k] = -entry;
          a[(n + k) * N + j] = entry;
        }
        rhs[n + k] = coreOut[n * n + n + m * n + k]!;
      }
      try {
        solveInPlace(lu!, rhs);
      } catch (error) {
        if (!(error instanceof SingularMatrixError)) throw error;
        const dependence = compiled.checkIndependence(q, rates, t, u);
        if (dependence !== null) throw new ModelError("singular", constraintField(constraints, dependence.index), dependence.message);
        throw new ModelError("singular", "massMatrix", "the mass matrix is singular on the motions the constraints allow at this state");
      }
      return { accelerations: Array.from(rhs.subarray(0, n)), multipliers: Array.from(rhs.subarray(n)) };
    },
    positionResiduals(q, t, u) {
      load(q, null, t, u);
      values.evaluate(slots, valueOut);
      return constraints.flatMap((c, k) => (c.kind === "position" ? [valueOut[k]!] : []));
    },
    rateResiduals(q, rates, t, u) {
      load(q, rates, t, u);
      core.evaluate(slots, coreOut);
      values.evaluate(slots, valueOut);
      const A = rowsOf();
      return constraints.map((c, k) => {
        if (c.kind === "rate") return valueOut[k]!;
        // ġ = A q' + ∂g/∂t; ∂g/∂t from g at t ± h (g is cheap and smooth in t).
        let velocity = 0;
        for (let j = 0; j < n; j++) velocity += A[k]![j]! * rates[j]!;
        return velocity + explicitTimeRate(k, q, t, u);
      });
    },
    jacobian(q, t, u) {
      load(q, null, t, u);
      core.evaluate(slots, coreOut);
      return rowsOf();
    },
    outputs(q, rates, solution, t, u) {
      load(q, rates, t, u, solution.accelerations, solution.multipliers);
      outputEvaluator.evaluate(slots, outputOut);
      return Array.from(outputOut);
    },
    checkIndependence(q, rates, t, u) {
      const A = compiled.jacobian(q, t, u);
      const found = findDependentRow(A);
      if (found === null) return null;
      const c = constraints[found.index]!;
      const names = found.combinationOf.map((i) => `"${constraints[i]!.name}"`);
      // Consistent when the residuals (and the biases) obey the same combination.
      const position = constraints.every((x, i) => x.kind === "position" || (i !== found.index && !found.combinationOf.includes(i)));
      const level = position ? allPositionValues(q, t, u) : compiled.rateResiduals(q, rates, t, u);
      load(q, rates, t, u);
      core.evaluate(slots, coreOut);
      const bias = Array.from({ length: m }, (_, k) => coreOut[n * n + n + m * n + k]!);
      const gap = (v: readonly number[]) => v[found.index]! - found.combinationOf.reduce((sum, i) => sum + found.weights[i]! * v[i]!, 0);
      const scale = (v: readonly number[]) => Math.max(1, ...[found.index, ...found.combinationOf].map((i) => Math.abs(v[i]!)));
      const inconsistent = Math.abs(gap(level)) > 1e-8 * scale(level) || Math.abs(gap(bias)) > 1e-8 * scale(bias);
      const message =
        names.length === 0
          ? `"${c.name}" does not constrain any coordinate's motion at this state (its row of the constraint matrix is zero)`
          : inconsistent
            ? `"${c.name}" contradicts ${names.join(", ")} at this state: its row of the constraint matrix is a combination of theirs but its value is not`
            : `"${c.name}" is redundant with ${names.join(", ")} at this state: its row of the constraint matrix is a combination of theirs`;
      return {
        index: found.index,
        name: c.name,
        kind: inconsistent ? "inconsistent" : "redundant",
        combinationOf: found.combinationOf.map((i) => constraints[i]!.name),
        message,
      };
    },
  };

  function allPositionValues(q: ArrayLike<number>, t: number, u: ArrayLike<number> | undefined): number[] {
    load(q, null, t, u);
    values.evaluate(slots, valueOut);
    return Array.from(valueOut);
  }
  function explicitTimeRate(k: number, q: ArrayLike<number>, t: number, u: ArrayLike<number> | undefined): number {
    const h = 1e-6 * Math.max(1, Math.abs(t));
    const after = allPositionValues(q, t + h, u)[k]!;
    const before = allPositionValues(q, t - h, u)[k]!;
    return (after - before) / (2 * h);
  }
  return compiled;
}

/**
 * The first row of `rows` that is a linear combination of earlier rows
 * (relative tolerance 1e-9), by Gram–Schmidt: its index, the earlier rows with
 * a nonzero weight, and the weights (by row index). Null for full row rank.
 *
 * @example findDependentRow([[1, 0], [2, 0]]) // { index: 1, combinationOf: [0], weights: [2, 0] }
 */
export function findDependentRow(rows: readonly (readonly number[])[]): { index: number; combinationOf: number[]; weights: number[] } | null {
  const basis: { vector: number[]; of: number[] }[] = [];
  for (let k = 0; k < rows.length; k++) {
    const row = rows[k]!;
    const norm = Math.hypot(...row);
    const residual = [...row];
    // Coefficients of the residual's removed part in terms of the original rows.
    const removed = new Array<number>(rows.length).fill(0);
    for (let pass = 0; pass < 2; pass++) {
      for (const b of basis) {
        const c = b.vector.reduce((sum, x, j) => sum + x * residual[j]!, 0);
        for (let j = 0; j < residual.length; j++) residual[j]! -= c * b.vector[j]!;
        b.of.forEach((w, i) => (removed[i]! += c * w));
      }
    }
    const left = Math.hypot(...residual);
    if (norm === 0 || left <= 1e-9 * norm) {
      const combinationOf = removed.flatMap((w, i) => (i < k && Math.abs(w) > 1e-9 ? [i] : []));
      return { index: k, combinationOf, weights: removed.map((w, i) => (i < k ? w : 0)) };
    }
    // vector = (row − Σ c_b b)/left, written over the original rows.
    const of = removed.map((w) => -w / left);
    of[k] = 1 / left;
    basis.push({ vector: residual.map((x) => x / left), of });
  }
  return null;
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
