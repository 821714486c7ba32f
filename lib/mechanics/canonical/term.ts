import type { Coefficient } from "./coefficient";
import type { SymbolSpace } from "./space";

/**
 * sin or cos of an angle combination Σ c_k·b_k over angle symbols (coordinates,
 * parameters, phases ω·t, π and the constant 1). `combo` is flat
 * `[id0, c0, id1, c1, …]` sorted by the space's angle rank, with the first
 * coefficient positive (cos(−u) = cos u, sin(−u) = −sin u), so that cos(a−b)
 * and cos(b−a) are one form.
 */
export interface Trig {
  readonly sin: boolean;
  readonly combo: readonly number[];
  readonly key: string;
}

/**
 * One canonical term: coefficient × Π symbol^exponent × (at most one sin/cos).
 * `f` is flat `[id0, e0, id1, e1, …]` sorted by id with no zero exponents.
 * Products of sines and cosines are always reduced to a single one by the
 * product-to-sum rules, which is what makes the form unique.
 */
export interface Term {
  readonly c: Coefficient;
  readonly f: readonly number[];
  readonly g: Trig | null;
  readonly key: string;
}

/** A sum of terms keyed by their monomial key (`Term.key`, which excludes the coefficient). */
export type Poly = Map<string, Term>;

export function monomialKey(f: readonly number[], g: Trig | null): string {
  return g === null ? f.join(",") : `${f.join(",")}|${g.key}`;
}

export function makeTerm(c: Coefficient, f: readonly number[], g: Trig | null): Term {
  return { c, f, g, key: monomialKey(f, g) };
}

/** Π a · Π b: exponents of equal ids add; zero exponents drop out. */
export function mergeFactors(a: readonly number[], b: readonly number[]): number[] {
  if (a.length === 0) return b as number[];
  if (b.length === 0) return a as number[];
  const out: number[] = [];
  let i = 0;
  let j = 0;
  while (i < a.length && j < b.length) {
    const ia = a[i]!;
    const ib = b[j]!;
    if (ia < ib) {
      out.push(ia, a[i + 1]!);
      i += 2;
    } else if (ib < ia) {
      out.push(ib, b[j + 1]!);
      j += 2;
    } else {
      const e = a[i + 1]! + b[j + 1]!;
      if (e !== 0) out.push(ia, e);
      i += 2;
      j += 2;
    }
  }
  for (; i < a.length; i += 2) out.push(a[i]!, a[i + 1]!);
  for (; j < b.length; j += 2) out.push(b[j]!, b[j + 1]!);
  return out;
}

/** Snaps an angle coefficient to the nearest small fraction, so 0.1 + 0.2 and 0.3 give one key. */
function tidy(c: number): number {
  const r = Math.round(c);
  if (Math.abs(c - r) < 1e-12) return r;
  for (let q = 2; q <= 360; q++) {
    const p = Math.round(c * q);
    if (Math.abs(p / q - c) < 1e-12) return p / q;
  }
  return c;
}

/** a + sign·b for angle combinations (sorted by angle rank). */
export function combineAngles(space: SymbolSpace, a: readonly number[], b: readonly number[], sign: 1 | -1): number[] {
  const out: number[] = [];
  let i = 0;
  let j = 0;
  while (i < a.length && j < b.length) {
    const ra = space.angleRank(a[i]!)!;
    const rb = space.angleRank(b[j]!)!;
    if (ra < rb) {
      out.push(a[i]!, a[i + 1]!);
      i += 2;
    } else if (rb < ra) {
      out.push(b[j]!, sign * b[j + 1]!);
      j += 2;
    } else {
      const c = tidy(a[i + 1]! + sign * b[j + 1]!);
      if (c !== 0) out.push(a[i]!, c);
      i += 2;
      j += 2;
    }
  }
  for (; i < a.length; i += 2) out.push(a[i]!, a[i + 1]!);
  for (; j < b.length; j += 2) out.push(b[j]!, sign * b[j + 1]!);
  return out;
}

/**
 * Brings sin/cos(combo) to canonical form. Returns the sign it contributes
 * (0 when the value is sin 0) and the trig factor (null when the value is ±1).
 */
export function canonicalTrig(space: SymbolSpace, sin: boolean, combo: number[]): { sign: -1 | 0 | 1; trig: Trig | null } {
  let sign: -1 | 1 = 1;
  // Whole multiples of π/2 become a swap of sin and cos and a sign.
  for (let i = 0; i < combo.length; i += 2) {
    if (combo[i] !== space.pi) continue;
    const quarter = tidy(2 * combo[i + 1]!);
    if (Number.isInteger(quarter)) {
      combo = combo.slice(0, i).concat(combo.slice(i + 2));
      const k = ((quarter % 4) + 4) % 4;
      if (sin) {
        if (k === 1 || k === 3) sin = false;
        if (k === 2 || k === 3) sign = -1;
      } else {
        if (k === 1 || k === 3) sin = true;
        if (k === 1 || k === 2) sign = -1;
      }
    }
    break;
  }
  if (combo.length === 0) return sin ? { sign: 0, trig: null } : { sign, trig: null };
  if (combo[1]! < 0) {
    combo = combo.map((v, k) => (k % 2 === 1 ? -v : v));
    if (sin) sign = sign === 1 ? -1 : 1;
  }
  return { sign, trig: { sin, combo, key: `${sin ? "s" : "c"}${combo.join(",")}` } };
}
