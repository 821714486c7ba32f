import { cancelledQuotient } from "./accelerations";
import { Algebra } from "./canonical/algebra";
import { partialDerivative, RateUnavailableError, type Derivation } from "./canonical/calculus";
import * as C from "./canonical/coefficient";
import { evaluatePoly, seededRandom } from "./canonical/evaluate";
import type { Poly } from "./canonical/term";
import { EngineLimitError, ModelError } from "./errors";
import type { Expr } from "./expr/ast";
import { findDependentRow } from "./constraints";
import type { ConstraintKind } from "./constraints";

/**
 * The symbolic side of constraints (see constraints.ts for the convention):
 * rows of A, the bias −(Ȧ q' + ȧ₀), the multiplier terms of the residuals,
 * and the multipliers in closed form from the augmented system by Cramer's
 * rule, where that stays small.
 */

export interface CanonicalConstraint {
  name: string;
  kind: ConstraintKind;
  /** `lambda_<name>` / `mu_<name>`. */
  symbol: string;
  /** Id of the multiplier symbol in the space. */
  id: number;
  /** Field path of the constraint's expression (`constraints[0].expr`). */
  field: string;
  expr: Poly;
  /** Row of A, one per coordinate. */
  jacobian: Poly[];
  /** A q'' = bias. */
  bias: Poly;
  /** ∂g/∂t (position) or a₀ and the a_kj depending on t (rate): the constraint moves in time. */
  explicitTime: boolean;
}

/** Largest augmented system (coordinates + constraints) solved in closed form. */
export const MULTIPLIER_CLOSED_FORM_MAX_SIZE = 8;
/** Term budget of the closed-form solve; beyond it the multiplier is left to the numeric evaluator. */
const CLOSED_FORM_MAX_TERMS = 4000;
/** Time budget of the closed-form solve (ms), for the same reason. */
const CLOSED_FORM_MAX_MS = 2000;

function withoutAccelerations(alg: Algebra, p: Poly): Poly {
  const out: Poly = alg.zero();
  for (const t of p.values()) {
    let acceleration = false;
    for (let k = 0; k < t.f.length; k += 2) if (alg.space.kind(t.f[k]!) === "acceleration") acceleration = true;
    if (!acceleration) alg.accumulate(out, t.c, t.f, t.g);
  }
  return out;
}

function timeDerivativeIn(dt: Derivation, p: Poly, field: string): Poly {
  try {
    return dt.apply(p);
  } catch (error) {
    if (error instanceof RateUnavailableError)
      throw new ModelError("unsupported", field, `the constraint's rate needs the rate of ${error.what}, which the model does not define`);
    throw error;
  }
}

/**
 * Rows of A and biases of the constraints. Throws ModelError naming the
 * constraint for one that mentions no coordinate, a rate constraint not
 * linear in the rates, or one without any rate.
 */
export function canonicalConstraint(
  alg: Algebra,
  dt: Derivation,
  spec: { name: string; kind: ConstraintKind; symbol: string; id: number; field: string },
  expr: Poly,
): CanonicalConstraint {
  const space = alg.space;
  const { field } = spec;
  if (!space.coordinates.some((q) => alg.dependsOn(expr, q)) && !space.rates.some((r) => alg.dependsOn(expr, r))) {
    throw new ModelError("unsupported", field, "the constraint does not depend on any coordinate");
  }
  if (spec.kind === "position") {
    const jacobian = space.coordinates.map((q) => partialDerivative(alg, q).apply(expr));
    const velocity = timeDerivativeIn(dt, expr, field);
    const bias = alg.negate(withoutAccelerations(alg, timeDerivativeIn(dt, velocity, field)));
    return { ...spec, expr, jacobian, bias, explicitTime: alg.dependsOn(expr, space.time) };
  }
  const jacobian = space.rates.map((r) => partialDerivative(alg, r).apply(expr));
  jacobian.forEach((a, j) => {
    if (space.rates.some((r) => alg.dependsOn(a, r))) {
      throw new ModelError(
        "unsupported",
        field,
        `the constraint is not linear in the rates: its coefficient of ${space.entry(space.rates[j]!).name}' depends on a rate`,
      );
    }
  });
  if (jacobian.every((a) => a.size === 0)) {
    throw new ModelError("unsupported", field, "the constraint contains no rate; a constraint on positions belongs under constraints");
  }
  let rest = expr;
  jacobian.forEach((a, j) => (rest = alg.sub(rest, alg.mul(a, alg.symbol(space.rates[j]!)))));
  if (space.rates.some((r) => alg.dependsOn(rest, r))) throw new ModelError("unsupported", field, "the constraint is not linear in the rates");
  const bias = alg.negate(withoutAccelerations(alg, timeDerivativeIn(dt, expr, field)));
  const explicitTime = rest.size > 0 || jacobian.some((a) => alg.dependsOn(a, space.time));
  return { ...spec, expr, jacobian, bias, explicitTime };
}

/** Residual_i −= Σ_k λ_k A_ki, in place. */
export function addMultiplierTerms(alg: Algebra, residuals: Poly[], constraints: readonly CanonicalConstraint[]): void {
  for (const c of constraints) {
    const symbol = alg.symbol(c.id);
    c.jacobian.forEach((a, i) => {
      if (a.size > 0) alg.mulInto(residuals[i]!, symbol, a, C.MINUS_ONE);
    });
  }
}

export type ClosedFormMultiplier = { multiplier: Expr; display: Expr } | { multiplier: null; reason: string };

/**
 * Checks A for rows that are combinations of earlier ones at seeded random
 * states (a constraint redundant with, or contradicting, the others wherever
 * the model is) and throws ModelError naming it.
 */
export function checkConstraintRows(alg: Algebra, constraints: readonly CanonicalConstraint[], parameterValues: ReadonlyMap<number, number>): void {
  if (constraints.length === 0) return;
  const random = seededRandom(11);
  const ids = new Set<number>();
  for (const c of constraints) for (const a of c.jacobian) for (const id of alg.dependencies(a)) ids.add(id);
  let dependentEverywhere: { index: number; combinationOf: number[] } | null = null;
  for (let attempt = 0; attempt < 3; attempt++) {
    const values = new Map<number, number>();
    for (const id of ids) values.set(id, parameterValues.get(id) ?? (random() < 0.5 ? -1 : 1) * (0.3 + random()));
    const rows = constraints.map((c) => c.jacobian.map((a) => evaluatePoly(alg.space, a, values)));
    if (rows.some((row) => row.some((x) => !Number.isFinite(x)))) continue;
    const found = findDependentRow(rows);
    if (found === null) return;
    dependentEverywhere = found;
  }
  if (dependentEverywhere === null) return;
  const c = constraints[dependentEverywhere.index]!;
  const others = dependentEverywhere.combinationOf.map((k) => `"${constraints[k]!.name}"`);
  const message =
    others.length === 0
      ? `"${c.name}" does not constrain any coordinate's motion (its row of the constraint matrix is zero)`
      : `"${c.name}" is a combination of ${others.join(", ")} at every state: it is redundant or contradicts ${others.length === 1 ? "it" : "them"}; remove it`;
  throw new ModelError("singular", c.field.replace(/\.expr$/, ""), message);
}

/**
 * λ_k / μ_k from [M −Aᵀ; A 0][q''; λ] = [f₀; bias] by Cramer's rule, with
 * determinants by Laplace expansion over column subsets (sparse rows cost
 * little), each quotient cancelled (accelerations.ts). Null with a reason
 * beyond MULTIPLIER_CLOSED_FORM_MAX_SIZE or the term budget.
 */
export function closedFormMultipliers(
  alg: Algebra,
  massMatrix: Poly[][],
  forcing: Poly[],
  constraints: readonly CanonicalConstraint[],
): ClosedFormMultiplier[] {
  const n = massMatrix.length;
  const m = constraints.length;
  const size = n + m;
  if (m === 0) return [];
  if (size > MULTIPLIER_CLOSED_FORM_MAX_SIZE) {
    const reason = `the augmented system is ${size}×${size}; multipliers are solved in closed form only up to ${MULTIPLIER_CLOSED_FORM_MAX_SIZE}×${MULTIPLIER_CLOSED_FORM_MAX_SIZE} and are evaluated numerically`;
    return constraints.map(() => ({ multiplier: null, reason }));
  }
  const small = new Algebra(alg.space, { maxTerms: CLOSED_FORM_MAX_TERMS, maxProductPairs: 40 * CLOSED_FORM_MAX_TERMS });
  const K: Poly[][] = [];
  for (let i = 0; i < n; i++) K.push([...massMatrix[i]!, ...constraints.map((c) => alg.negate(c.jacobian[i]!))]);
  for (const c of constraints) K.push([...c.jacobian, ...constraints.map(() => alg.zero())]);
  const rhs = [...forcing, ...constraints.map((c) => c.bias)];
  const deadline = performance.now() + CLOSED_FORM_MAX_MS;
  try {
    const det = determinant(small, K, deadline);
    if (det.size === 0) {
      const reason = "the augmented system is singular for every state";
      return constraints.map(() => ({ multiplier: null, reason }));
    }
    return constraints.map((_, k) => {
      const replaced = K.map((row, i) => row.map((entry, j) => (j === n + k ? rhs[i]! : entry)));
      const numerator = determinant(small, replaced, deadline);
      const { expr, display } = cancelledQuotient(small, numerator, det);
      return { multiplier: expr, display };
    });
  } catch (error) {
    if (!(error instanceof EngineLimitError)) throw error;
    const reason =
      error.limit === "time"
        ? `the closed form took longer than ${CLOSED_FORM_MAX_MS / 1000} s; the multipliers are evaluated numerically`
        : `the closed form grew beyond ${CLOSED_FORM_MAX_TERMS} terms; the multipliers are evaluated numerically`;
    return constraints.map(() => ({ multiplier: null, reason }));
  }
}

/** det by Laplace expansion along rows, memoised over the set of columns used; zero entries cost nothing. */
function determinant(alg: Algebra, K: Poly[][], deadline: number): Poly {
  const N = K.length;
  const memo = new Map<number, Poly>();
  const expand = (row: number, used: number): Poly => {
    if (row === N) return alg.constant(C.ONE);
    const found = memo.get(used);
    if (found !== undefined) return found;
    if (performance.now() > deadline) throw new EngineLimitError("time", "the closed form of the multipliers takes too long");
    const out: Poly = alg.zero();
    let position = 0;
    for (let j = 0; j < N; j++) {
      if (used & (1 << j)) continue;
      const entry = K[row]![j]!;
      if (entry.size > 0) {
        const minor = expand(row + 1, used | (1 << j));
        if (minor.size > 0) alg.mulInto(out, entry, minor, position % 2 === 0 ? C.ONE : C.MINUS_ONE);
      }
      position++;
    }
    memo.set(used, out);
    return out;
  };
  return expand(0, 0);
}
