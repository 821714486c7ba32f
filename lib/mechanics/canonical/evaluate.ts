import { FUNCTION_VALUES } from "../graph";
import * as C from "./coefficient";
import type { SymbolSpace } from "./space";
import type { Poly, Term, Trig } from "./term";

/** Values of the plain symbols of a space, by id (atoms are computed from them). */
export type SymbolValues = ReadonlyMap<number, number>;

/**
 * The value of a canonical sum at a point, atoms included. Used to check
 * results that come from outside the engine (nerdamer) before they are used.
 *
 * @example evaluatePoly(space, p, new Map([[x, 0.5]]))
 */
export function evaluatePoly(space: SymbolSpace, p: Poly, values: SymbolValues): number {
  let sum = 0;
  for (const t of p.values()) sum += evaluateTerm(space, t, values);
  return sum;
}

function evaluateTerm(space: SymbolSpace, t: Term, values: SymbolValues): number {
  let product = C.toNumber(t.c);
  for (let i = 0; i < t.f.length; i += 2) product *= Math.pow(symbolValue(space, t.f[i]!, values), t.f[i + 1]!);
  if (t.g !== null) product *= trigValue(space, t.g, values);
  return product;
}

function trigValue(space: SymbolSpace, g: Trig, values: SymbolValues): number {
  let angle = 0;
  for (let i = 0; i < g.combo.length; i += 2) angle += g.combo[i + 1]! * symbolValue(space, g.combo[i]!, values);
  return g.sin ? Math.sin(angle) : Math.cos(angle);
}

function symbolValue(space: SymbolSpace, id: number, values: SymbolValues): number {
  const entry = space.entry(id);
  switch (entry.kind) {
    case "pi":
      return Math.PI;
    case "one":
      return 1;
    case "function":
      return FUNCTION_VALUES[entry.fn!](evaluatePoly(space, entry.arg!, values));
    case "power":
      // The exponent sits on the factor that refers to the atom; the atom itself is its base.
      return evaluatePoly(space, entry.base!, values);
    case "phase":
      return evaluateTerm(space, entry.phase!, values) * (values.get(space.time) ?? Number.NaN);
    default:
      return values.get(id) ?? Number.NaN;
  }
}

/** mulberry32: a small seeded generator, so numeric checks are repeatable. */
export function seededRandom(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/**
 * True when `a` and `b` agree (relative 1e-8) at seeded random points of the
 * plain symbols they depend on. Points where `a` is not finite (outside its
 * domain) are skipped; at least `required` points must be compared.
 */
export function agreeNumerically(space: SymbolSpace, dependencies: Iterable<number>, a: Poly, b: Poly, seed = 7, required = 3): boolean {
  const ids = [...dependencies];
  const random = seededRandom(seed);
  let compared = 0;
  for (let attempt = 0; attempt < 4 * required && compared < required; attempt++) {
    const values = new Map<number, number>();
    // Both signs: a rewrite that only holds for positive symbols (sqrt(x^2) = x) must fail here.
    for (const id of ids) values.set(id, (random() < 0.5 ? -1 : 1) * (0.3 + random()));
    const va = evaluatePoly(space, a, values);
    if (!Number.isFinite(va)) continue;
    const vb = evaluatePoly(space, b, values);
    if (!(Math.abs(va - vb) <= 1e-8 * Math.max(1, Math.abs(va)))) return false;
    compared++;
  }
  return compared >= required;
}
