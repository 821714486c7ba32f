import type { Algebra } from "./canonical/algebra";
import * as C from "./canonical/coefficient";
import { displayQuotient } from "./canonical/display";
import { reducedQuotient } from "./canonical/general";
import type { Poly } from "./canonical/term";
import { polyToExpr } from "./canonical/to-expr";
import type { Expr } from "./expr/ast";
import { bin, num } from "./expr/build";

export interface SolvedAcceleration {
  coordinate: string;
  /** q'' as a function of q, q', t and the inputs (a canonical sum, or a quotient of two). */
  expr: Expr;
  /** `expr` in display form (numerator and denominator collected and factored). */
  display: Expr;
}

export type AccelerationsResult = SolvedAcceleration[] | { available: false; reason: string };

/** Largest block of coupled coordinates solved symbolically: beyond 2×2 the quotients are too long to read. */
export const ACCELERATIONS_MAX_SIZE = 2;

/**
 * q'' from M q'' = f by Cramer's rule, block by block: coordinates that the
 * mass matrix couples (a nonzero M[i][j], directly or through others) form a
 * block, and every block of up to ACCELERATIONS_MAX_SIZE coordinates is
 * solved, so a system of any size whose coupled groups are small gets its
 * accelerations. When the determinant is a single term without sin/cos the
 * quotient stays in the canonical form (θ'' = -g*sin(θ)/l); otherwise it is
 * one fraction with the common monomial factor cancelled and, where both
 * sums are free of sin/cos, their common polynomial factor too (nerdamer's
 * gcd, checked numerically).
 *
 * @example solveAccelerations(alg, ["theta"], [[m*l^2]], [-m*g*l*sin(theta)]) // θ'' = -g*sin(theta)/l
 */
export function solveAccelerations(alg: Algebra, coordinates: readonly string[], massMatrix: Poly[][], forcing: Poly[]): AccelerationsResult {
  const n = coordinates.length;
  if (n === 0) return [];
  const blocks = coupledBlocks(massMatrix);
  const large = blocks.find((block) => block.length > ACCELERATIONS_MAX_SIZE);
  if (large !== undefined) {
    const k = large.length;
    const names = large.map((i) => coordinates[i]!);
    const which = k === n ? `all ${k} coordinates are` : `${names.slice(0, -1).join(", ")} and ${names[k - 1]} are`;
    return {
      available: false,
      reason: `${which} coupled through the mass matrix (a ${k}×${k} block); accelerations are solved symbolically only for blocks up to ${ACCELERATIONS_MAX_SIZE}×${ACCELERATIONS_MAX_SIZE}`,
    };
  }
  const solved: SolvedAcceleration[] = new Array(n);
  for (const block of blocks) {
    const M = block.map((i) => block.map((j) => massMatrix[i]![j]!));
    const f = block.map((i) => forcing[i]!);
    let det: Poly;
    let numerators: Poly[];
    if (block.length === 1) {
      det = M[0]![0]!;
      numerators = [f[0]!];
    } else {
      det = alg.sub(alg.mul(M[0]![0]!, M[1]![1]!), alg.mul(M[0]![1]!, M[1]![0]!));
      numerators = [alg.sub(alg.mul(M[1]![1]!, f[0]!), alg.mul(M[0]![1]!, f[1]!)), alg.sub(alg.mul(M[0]![0]!, f[1]!), alg.mul(M[1]![0]!, f[0]!))];
    }
    if (det.size === 0) return { available: false, reason: "the mass matrix is singular" };
    block.forEach((i, k) => (solved[i] = { coordinate: coordinates[i]!, ...cancelledQuotient(alg, numerators[k]!, det) }));
  }
  return solved;
}

/** Groups of coordinates joined by nonzero off-diagonal mass-matrix entries, each in coordinate order. */
function coupledBlocks(massMatrix: Poly[][]): number[][] {
  const n = massMatrix.length;
  const root = Array.from({ length: n }, (_, i) => i);
  const find = (i: number): number => (root[i] === i ? i : (root[i] = find(root[i]!)));
  for (let i = 0; i < n; i++) {
    for (let j = i + 1; j < n; j++) {
      if (massMatrix[i]![j]!.size > 0 || massMatrix[j]![i]!.size > 0) root[find(i)] = find(j);
    }
  }
  const blocks = new Map<number, number[]>();
  for (let i = 0; i < n; i++) {
    const r = find(i);
    if (!blocks.has(r)) blocks.set(r, []);
    blocks.get(r)!.push(i);
  }
  return [...blocks.values()];
}

/**
 * numerator/det with the common monomial and, where both are free of sin/cos,
 * the common polynomial factor cancelled: canonical where the denominator is a
 * single plain term, else one quotient; with its display form.
 */
export function cancelledQuotient(alg: Algebra, numerator: Poly, det: Poly): { expr: Expr; display: Expr } {
  const space = alg.space;
  if (numerator.size === 0) return { expr: num(0), display: num(0) };
  let [top, bottom] = cancelCommonFactor(alg, numerator, det);
  const single = bottom.size === 1 ? bottom.values().next().value! : null;
  if (single === null || single.g !== null) {
    if (!hasTrig(top) && !hasTrig(bottom)) [top, bottom] = cancelPolynomialGcd(alg, top, bottom);
  }
  // The display form is always one fraction: (−c*z' − k*z + F)/m rather than a quotient per term.
  const display = displayQuotient(alg, top, bottom);
  const bottomSingle = bottom.size === 1 ? bottom.values().next().value! : null;
  if (bottomSingle !== null && bottomSingle.g === null) {
    return { expr: polyToExpr(space, alg.mul(top, alg.fromTerm(alg.termPower(bottomSingle, -1)))), display };
  }
  return { expr: bin("/", polyToExpr(space, top), polyToExpr(space, bottom)), display };
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
