import type { Algebra } from "./canonical/algebra";
import * as C from "./canonical/coefficient";
import { formatPoly } from "./canonical/format";
import { reducedQuotient } from "./canonical/general";
import type { SymbolSpace } from "./canonical/space";
import type { Poly } from "./canonical/term";

export interface SolvedAcceleration {
  coordinate: string;
  /** q'' as a function of q, q', t and the inputs, in the input syntax. */
  expr: string;
}

export type AccelerationsResult = SolvedAcceleration[] | { available: false; reason: string };

/** Largest system solved symbolically: beyond 2×2 the quotients are too long to read. */
export const ACCELERATIONS_MAX_SIZE = 2;

/**
 * q'' from M q'' = f by Cramer's rule, for one or two coordinates. When the
 * determinant is a single term without sin/cos the quotient stays in the
 * canonical form (θ'' = -g*sin(θ)/l); otherwise it is written as one fraction
 * with the common monomial factor cancelled and, where both sums are free of
 * sin/cos, their common polynomial factor too (nerdamer's gcd, checked
 * numerically).
 *
 * @example solveAccelerations(alg, ["theta"], [[m*l^2]], [-m*g*l*sin(theta)]) // [{ coordinate: "theta", expr: "-g*sin(theta)/l" }]
 */
export function solveAccelerations(alg: Algebra, coordinates: readonly string[], massMatrix: Poly[][], forcing: Poly[]): AccelerationsResult {
  const n = coordinates.length;
  if (n === 0) return [];
  if (n > ACCELERATIONS_MAX_SIZE) {
    return { available: false, reason: `the mass matrix is ${n}×${n}; accelerations are solved symbolically only up to ${ACCELERATIONS_MAX_SIZE}×${ACCELERATIONS_MAX_SIZE}` };
  }
  const M = massMatrix;
  const f = forcing;
  let det: Poly;
  let numerators: Poly[];
  if (n === 1) {
    det = M[0]![0]!;
    numerators = [f[0]!];
  } else {
    det = alg.sub(alg.mul(M[0]![0]!, M[1]![1]!), alg.mul(M[0]![1]!, M[1]![0]!));
    numerators = [
      alg.sub(alg.mul(M[1]![1]!, f[0]!), alg.mul(M[0]![1]!, f[1]!)),
      alg.sub(alg.mul(M[0]![0]!, f[1]!), alg.mul(M[1]![0]!, f[0]!)),
    ];
  }
  if (det.size === 0) return { available: false, reason: "the mass matrix is singular" };
  const space = alg.space;
  return numerators.map((numerator, i) => ({ coordinate: coordinates[i]!, expr: quotientText(alg, space, numerator, det) }));
}

function quotientText(alg: Algebra, space: SymbolSpace, numerator: Poly, det: Poly): string {
  if (numerator.size === 0) return "0";
  let [top, bottom] = cancelCommonFactor(alg, numerator, det);
  const single = bottom.size === 1 ? bottom.values().next().value! : null;
  if (single !== null && single.g === null) return formatPoly(space, alg.mul(top, alg.fromTerm(alg.termPower(single, -1))));
  if (!hasTrig(top) && !hasTrig(bottom)) [top, bottom] = cancelPolynomialGcd(alg, top, bottom);
  const bottomSingle = bottom.size === 1 ? bottom.values().next().value! : null;
  if (bottomSingle !== null && bottomSingle.g === null) return formatPoly(space, alg.mul(top, alg.fromTerm(alg.termPower(bottomSingle, -1))));
  const topText = formatPoly(space, top);
  return `${top.size > 1 ? `(${topText})` : topText}/(${formatPoly(space, bottom)})`;
}

function hasTrig(p: Poly): boolean {
  for (const t of p.values()) if (t.g !== null) return true;
  return false;
}

/**
 * Divides both sums by their common monomial: the rational content (so the
 * coefficients become coprime integers) times each plain symbol to the lowest
 * power it has in every term. θ1'' of the double pendulum loses its m2·l1·l2²
 * and its halves this way.
 */
function cancelCommonFactor(alg: Algebra, a: Poly, b: Poly): [Poly, Poly] {
  const terms = [...a.values(), ...b.values()];
  let n = 0;
  let d = 1;
  for (const t of terms) {
    if (!C.isExact(t.c)) {
      n = 0;
      break;
    }
    n = gcd(n, Math.abs(t.c.n));
    d = (d / gcd(d, t.c.d)) * t.c.d;
    if (!Number.isSafeInteger(d)) {
      n = 0;
      break;
    }
  }
  const content = n === 0 ? C.ONE : C.rational(n, d);
  let common: Map<number, number> | null = null;
  for (const t of terms) {
    const here = new Map<number, number>();
    for (let i = 0; i < t.f.length; i += 2) {
      const kind = alg.space.kind(t.f[i]!);
      if (kind !== "function" && kind !== "power" && t.f[i + 1]! > 0) here.set(t.f[i]!, t.f[i + 1]!);
    }
    if (common === null) common = here;
    else for (const [id, e] of common) common.set(id, Math.min(e, here.get(id) ?? 0));
  }
  const f: number[] = [];
  for (const [id, e] of [...(common ?? new Map<number, number>())].sort((x, y) => x[0] - y[0])) if (e > 0) f.push(id, e);
  if (f.length === 0 && C.isOne(content)) return [a, b];
  const inverse = alg.fromTerm(alg.termPower({ c: content, f, g: null, key: "" }, -1));
  return [alg.mul(a, inverse), alg.mul(b, inverse)];
}

function gcd(x: number, y: number): number {
  while (y !== 0) [x, y] = [y, x % y];
  return x;
}

/** Cancels a common polynomial factor (nerdamer's gcd), checked numerically; the sums unchanged when there is none. */
function cancelPolynomialGcd(alg: Algebra, a: Poly, b: Poly): [Poly, Poly] {
  const reduced = reducedQuotient(alg, a, b);
  return reduced ?? [a, b];
}
