/**
 * The general-form path: expressions outside the trigonometric-polynomial class
 * (atoms such as sqrt(u), 1/(a+b), exp(u), log(u), tan(u)) are handed to
 * nerdamer, a general-purpose CAS, which normalises atom arguments (so that
 * equal general expressions become one atom) and differentiates atoms.
 *
 * Nothing nerdamer returns is trusted blindly: every result is read back into
 * the canonical form and compared numerically with what it replaces at seeded
 * random points; on disagreement the engine's own result stands. Models inside
 * the canonical class never reach this module (no atoms, no nerdamer calls).
 */
import nerdamer from "nerdamer";
import "nerdamer/Calculus.js";
import { parseExpression } from "../expr/parse";
import * as C from "./coefficient";
import type { Algebra } from "./algebra";
import { agreeNumerically } from "./evaluate";
import { toFraction } from "./to-expr";
import { toCanonical } from "./from-expr";
import type { SymbolSpace } from "./space";
import type { Poly, Term, Trig } from "./term";

/** nerdamer's internals (its typings declare getCore() as any). */
interface NerdamerSymbol {
  group: number;
  fname?: string;
  args?: NerdamerSymbol[];
  symbols?: Record<string, NerdamerSymbol>;
  power: unknown;
  contains(variable: string, all?: boolean): boolean;
}
interface NerdamerCore {
  PARSER: { parse(text: string): NerdamerSymbol };
  Expression: new (symbol: NerdamerSymbol) => { toString(): string };
  groups: { FN: number; CB: number; CP: number; PL: number; EX: number };
}

const core = nerdamer.getCore() as NerdamerCore;

/** Inputs larger than this stay with the engine: nerdamer's simplify is slow on big sums. */
const MAX_TEXT = 1500;
const MAX_CACHE = 4000;
/** Polynomial gcds are asked only of small sums (nerdamer's gcd is slow beyond). */
const MAX_GCD_TERMS = 16;
const MAX_GCD_TEXT = 600;

/** nerdamer text → result text (null: nerdamer failed); shared by all derivations, bounded. */
const cache = new Map<string, string | null>();

function run(text: string): string | null {
  const hit = cache.get(text);
  if (hit !== undefined || cache.has(text)) return hit ?? null;
  let out: string | null;
  try {
    // PARSER.parse, not nerdamer(): the latter keeps every expression in a global list.
    out = new core.Expression(core.PARSER.parse(text)).toString();
  } catch {
    out = null;
  }
  if (cache.size >= MAX_CACHE) cache.delete(cache.keys().next().value!);
  cache.set(text, out);
  return out;
}

/** The name a plain symbol has in nerdamer text. */
export function nerdamerName(id: number): string {
  return `v${id}`;
}

/**
 * A canonical sum as nerdamer text, plain symbols named v<id>; null when it
 * holds a float coefficient or exponent (nerdamer would round it to a fraction).
 */
export function toNerdamerText(space: SymbolSpace, p: Poly): string | null {
  if (p.size === 0) return "0";
  const parts: string[] = [];
  for (const t of p.values()) {
    const text = termText(space, t);
    if (text === null) return null;
    parts.push(text);
  }
  return parts.join("+");
}

function coefficientText(c: C.Coefficient): string | null {
  if (!C.isExact(c)) return null;
  return c.d === 1 ? `(${c.n})` : `(${c.n}/${c.d})`;
}

function exponentText(e: number): string | null {
  if (e === 1) return "";
  const [p, q] = toFraction(e);
  if (!Number.isFinite(q)) return null;
  return q === 1 ? `^(${p})` : `^(${p}/${q})`;
}

function termText(space: SymbolSpace, t: Term): string | null {
  const factors: string[] = [];
  const c = coefficientText(t.c);
  if (c === null) return null;
  factors.push(c);
  for (let i = 0; i < t.f.length; i += 2) {
    const base = factorText(space, t.f[i]!);
    const exponent = exponentText(t.f[i + 1]!);
    if (base === null || exponent === null) return null;
    factors.push(exponent === "" ? base : `${base}${exponent}`);
  }
  if (t.g !== null) {
    const trig = trigText(space, t.g);
    if (trig === null) return null;
    factors.push(trig);
  }
  return factors.join("*");
}

function factorText(space: SymbolSpace, id: number): string | null {
  const entry = space.entry(id);
  switch (entry.kind) {
    case "pi":
      return "pi";
    case "one":
      return "1";
    case "function": {
      const arg = toNerdamerText(space, entry.arg!);
      return arg === null ? null : `${entry.fn}(${arg})`;
    }
    case "power": {
      const base = toNerdamerText(space, entry.base!);
      return base === null ? null : `(${base})`;
    }
    case "phase": {
      const monomial = termText(space, entry.phase!);
      return monomial === null ? null : `(${monomial}*${nerdamerName(space.time)})`;
    }
    default:
      return nerdamerName(id);
  }
}

function trigText(space: SymbolSpace, g: Trig): string | null {
  const parts: string[] = [];
  for (let i = 0; i < g.combo.length; i += 2) {
    const [p, q] = toFraction(g.combo[i + 1]!);
    if (!Number.isFinite(q)) return null;
    const member = factorText(space, g.combo[i]!);
    if (member === null) return null;
    parts.push(`(${p}/${q})*${member}`);
  }
  return `${g.sin ? "sin" : "cos"}(${parts.join("+")})`;
}

/** nerdamer names for functions outside Holonomy's whitelist, as whitelisted expressions of X. */
const REWRITES: Record<string, (x: string) => string> = {
  sec: (x) => `(1/cos(${x}))`,
  csc: (x) => `(1/sin(${x}))`,
  cot: (x) => `(cos(${x})/sin(${x}))`,
  sech: (x) => `(1/cosh(${x}))`,
  csch: (x) => `(1/sinh(${x}))`,
  coth: (x) => `(cosh(${x})/sinh(${x}))`,
};

/** Index of the parenthesis closing the one at `open`, or -1. */
function closing(text: string, open: number): number {
  let depth = 0;
  for (let i = open; i < text.length; i++) {
    if (text[i] === "(") depth++;
    else if (text[i] === ")" && --depth === 0) return i;
  }
  return -1;
}

/**
 * nerdamer's output in Holonomy's expression syntax: e^u → exp(u), sec → 1/cos
 * and the like. Throws on anything it does not recognise (the caller falls back).
 */
export function fromNerdamerSyntax(text: string): string {
  let out = "";
  let i = 0;
  while (i < text.length) {
    const match = /^[A-Za-z_][A-Za-z0-9_]*/.exec(text.slice(i));
    if (match === null || (i > 0 && /[A-Za-z0-9_.]/.test(text[i - 1]!))) {
      out += text[i];
      i++;
      continue;
    }
    const name = match[0];
    let j = i + name.length;
    if (name === "e") {
      if (text[j] !== "^") {
        out += "exp(1)";
        i = j;
        continue;
      }
      j++;
      let exponent: string;
      if (text[j] === "(") {
        const end = closing(text, j);
        if (end < 0) throw new Error("unbalanced parentheses");
        exponent = text.slice(j + 1, end);
        j = end + 1;
      } else {
        const token = /^-?[A-Za-z0-9_.]+/.exec(text.slice(j));
        if (token === null) throw new Error("unreadable exponent");
        exponent = token[0];
        j += exponent.length;
      }
      out += `exp(${fromNerdamerSyntax(exponent)})`;
      i = j;
      continue;
    }
    const rewrite = REWRITES[name];
    if (rewrite !== undefined && text[j] === "(") {
      const end = closing(text, j);
      if (end < 0) throw new Error("unbalanced parentheses");
      out += rewrite(fromNerdamerSyntax(text.slice(j + 1, end)));
      i = end + 1;
      continue;
    }
    out += name;
    i = j;
  }
  return out;
}

/** Re-entrancy guard: reading nerdamer's answer back creates atoms, which must not call nerdamer again. */
let depth = 0;

/** nerdamer text (names v<id>) read back into the canonical form; null when it cannot be. */
export function fromNerdamerText(alg: Algebra, text: string): Poly | null {
  depth++;
  try {
    const tree = parseExpression(fromNerdamerSyntax(text));
    return toCanonical(alg, tree, (node) => {
      const id = /^v(\d+)$/.exec(node.name);
      if (id === null || node.order !== 0 || Number(id[1]) >= alg.space.entries.length) throw new Error(`unexpected symbol ${node.name}`);
      return alg.symbol(Number(id[1]));
    });
  } catch {
    return null;
  } finally {
    depth--;
  }
}

/** True when a sum has an atom factor (its value is outside the trigonometric-polynomial class). */
export function hasAtoms(space: SymbolSpace, p: Poly): boolean {
  for (const t of p.values()) {
    for (let i = 0; i < t.f.length; i += 2) {
      const kind = space.kind(t.f[i]!);
      if (kind === "function" || kind === "power") return true;
    }
  }
  return false;
}

/** Numbers nerdamer writes with many digits are its rational stand-ins for e or a float: not a usable form. */
function looksApproximate(text: string): boolean {
  return /\d{7,}/.test(text);
}

/**
 * The argument of an atom in normal form, so that equal arguments give one atom
 * (sqrt(1/(x+1) + 1) and sqrt((x+2)/(x+1)); atan(1/(x+y) + 1/(x−y)) and
 * atan(2x/(x²−y²))). Denominators (power atoms with a negative integer
 * exponent) are brought together: arg = N/D with D the expanded product of the
 * denominators; where N is a polynomial, nerdamer's polynomial gcd cancels the
 * common factor of N and D. The result is N'·(D')^(−1), D' a single atom whose
 * content and sign the algebra normalises, checked to equal `arg` in value.
 * Sums without denominators are already canonical and come back unchanged.
 */
export function normaliseArgument(alg: Algebra, arg: Poly): Poly {
  if (depth > 0 || normalised.has(arg) || !hasAtoms(alg.space, arg)) return arg;
  const text = toNerdamerText(alg.space, arg);
  if (text === null || text.length > MAX_TEXT) return arg;
  let memo = normalForms.get(alg.space);
  if (memo === undefined) normalForms.set(alg.space, (memo = new Map()));
  const known = memo.get(text);
  if (known !== undefined) return known;
  let normal = arg;
  depth++;
  try {
    const candidate = commonDenominator(alg, arg);
    if (candidate !== null && agreeNumerically(alg.space, alg.dependencies(arg), arg, candidate)) normal = candidate;
  } catch {
    // An intermediate too large for the engine's limits: keep the argument as written.
  } finally {
    depth--;
  }
  normalised.add(normal);
  memo.set(text, normal);
  return normal;
}

/**
 * N·Π P_i^(−k_i) with the denominators P_i kept apart (compact) and every
 * factor N shares with one of them cancelled; null when there is no
 * denominator, when N still holds atoms, or when the result is far larger
 * than the argument (a sum over many denominators grows; past the cap the
 * argument is kept as written, and equal forms are no longer guaranteed).
 */
function commonDenominator(alg: Algebra, arg: Poly): Poly | null {
  const space = alg.space;
  const denominators = new Map<number, number>();
  for (const t of arg.values()) {
    for (let i = 0; i < t.f.length; i += 2) {
      const id = t.f[i]!;
      const e = t.f[i + 1]!;
      if (space.kind(id) === "power" && Number.isInteger(e) && e < 0) denominators.set(id, Math.max(denominators.get(id) ?? 0, -e));
    }
  }
  if (denominators.size === 0) return null;
  let numerator = arg;
  // Multiplying by the atom itself (not its expansion) cancels the negative powers exactly.
  for (const [id, k] of denominators) numerator = alg.mul(numerator, alg.symbol(id, k));
  if (hasAtoms(space, numerator)) return null;
  const factors: [Poly, number][] = [];
  for (const [id, k] of denominators) {
    let base = space.entry(id).base!;
    let remaining = k;
    while (remaining > 0) {
      const reduced = reducedQuotient(alg, numerator, base, [base]);
      if (reduced === null) break;
      numerator = reduced[0];
      remaining--;
      if (hasVariables(reduced[1])) {
        // Part of the base cancelled: what is left of it is a new denominator.
        factors.push([reduced[1], 1]);
      } else numerator = alg.mul(numerator, alg.power(reduced[1], -1));
      base = space.entry(id).base!;
    }
    if (remaining > 0) factors.push([base, remaining]);
  }
  let result = numerator;
  for (const [base, k] of factors) result = alg.mul(result, alg.power(base, -k));
  return result.size > 4 * arg.size + 8 ? null : result;
}

function hasVariables(p: Poly): boolean {
  for (const t of p.values()) if (t.f.length > 0 || t.g !== null) return true;
  return false;
}

/** Sums already in normal form (so normalising is idempotent and never loops). */
const normalised = new WeakSet<Poly>();
/** Per symbol table: nerdamer text of an argument → its normal form. */
const normalForms = new WeakMap<SymbolSpace, Map<string, Poly>>();

/**
 * True when differentiating `text` with nerdamer 1.1.13 meets its sqrt defect:
 * its Calculus add-on rewrites sqrt(u) as u^(1/2) by changing the argument
 * object in place, and Symbol.clone shares function arguments, so in a product
 * rule the other terms see sqrt(u^(1/2)) (d/da[sqrt(k+a^2)*exp(a)] comes out
 * with e^a*sqrt((a^2+k)^(1/2))). It needs a sqrt factor in a product whose
 * other factors depend on the variable.
 */
export function meetsSqrtProductDefect(text: string, variable: string): boolean {
  let root: NerdamerSymbol;
  try {
    root = core.PARSER.parse(text);
  } catch {
    return true;
  }
  const { FN, CB } = core.groups;
  const visit = (s: NerdamerSymbol): boolean => {
    if (s.group === CB && s.symbols) {
      const factors = Object.values(s.symbols);
      const hasSqrt = factors.some((f) => f.group === FN && f.fname === "sqrt" && f.contains(variable, true));
      if (hasSqrt && factors.filter((f) => f.contains(variable, true)).length > 1) return true;
    }
    for (const child of [...(s.args ?? []), ...Object.values(s.symbols ?? {})]) if (visit(child)) return true;
    if (typeof s.power === "object" && s.power !== null && "group" in s.power && visit(s.power as NerdamerSymbol)) return true;
    return false;
  };
  return visit(root);
}

/**
 * ∂(atom)/∂x by nerdamer, read back into the canonical form, when it is safe,
 * correct and more compact: the sqrt defect above is routed around, and the
 * answer must agree numerically with `engine` (the engine's chain rule) and
 * have fewer terms (d tan(u)/du = 1/cos(u)^2 rather than 1 + tan(u)^2).
 * Returns `engine` otherwise; a single-term `engine` is returned at once.
 */
export function generalPartial(alg: Algebra, atom: number, x: number, engine: Poly | null): Poly | null {
  if (depth > 0 || engine === null || engine.size <= 1) return engine;
  const space = alg.space;
  const atomPoly = alg.symbol(atom);
  const text = toNerdamerText(space, atomPoly);
  if (text === null || text.length > MAX_TEXT) return engine;
  const variable = nerdamerName(x);
  if (meetsSqrtProductDefect(text, variable)) return engine;
  const result = run(`diff(${text},${variable})`);
  if (result === null || looksApproximate(result)) return engine;
  const theirs = fromNerdamerText(alg, result);
  if (theirs === null) return engine;
  if (theirs.size >= engine.size || !agreeNumerically(space, alg.dependencies(atomPoly), engine, theirs)) return engine;
  return theirs.size === 0 ? null : theirs;
}

/**
 * a/b with the common polynomial factors of a and b cancelled; null when there
 * is none or it cannot be verified. Both sums must be free of atoms.
 *
 * nerdamer 1.1.13's gcd misses common factors of multivariate polynomials
 * (gcd(x*y + y^2, x^2 - y^2) = 1, and gcd(x^2 + k*x - 1 - k, -x + 1) = 1
 * while the same with x - 1 gives x - 1). So its gcd is asked with the signs
 * flipped too, and a candidate is accepted only when it divides a and b
 * exactly in the canonical form. Its factor() is not used: it is incomplete
 * and can run for minutes on small multivariate sums. Sums above
 * MAX_GCD_TERMS terms are left alone for the same reason.
 */
export function reducedQuotient(alg: Algebra, a: Poly, b: Poly, knownFactors: readonly Poly[] = []): [Poly, Poly] | null {
  const space = alg.space;
  if (hasAtoms(space, a) || hasAtoms(space, b)) return null;
  depth++;
  try {
    let top = a;
    let bottom = b;
    let reduced = false;
    for (let round = 0; round < 4; round++) {
      const next = cancelOneFactor(alg, top, bottom, knownFactors);
      if (next === null) break;
      [top, bottom] = next;
      reduced = true;
    }
    return reduced ? [top, bottom] : null;
  } finally {
    depth--;
  }
}

function cancelOneFactor(alg: Algebra, a: Poly, b: Poly, knownFactors: readonly Poly[]): [Poly, Poly] | null {
  const space = alg.space;
  if (a.size > MAX_GCD_TERMS || b.size > MAX_GCD_TERMS) return null;
  const top = toNerdamerText(space, a);
  const bottom = toNerdamerText(space, b);
  if (top === null || bottom === null || top.length + bottom.length > MAX_GCD_TEXT) return null;
  const tried = new Set<string>();
  const attempt = (candidate: string | null): [Poly, Poly] | null => {
    if (candidate === null || tried.has(candidate) || looksApproximate(candidate)) return null;
    tried.add(candidate);
    const f = fromNerdamerText(alg, candidate);
    if (f === null || !hasVariables(f) || hasAtoms(space, f)) return null;
    const qa = exactQuotient(alg, a, top, f, candidate);
    const qb = qa === null ? null : exactQuotient(alg, b, bottom, f, candidate);
    return qa !== null && qb !== null ? [qa, qb] : null;
  };
  // Cheapest first: the factors the caller already knows, then nerdamer's gcd with either sign of b.
  for (const f of knownFactors) {
    const found = attempt(toNerdamerText(space, f));
    if (found !== null) return found;
  }
  for (const y of [bottom, `-(${bottom})`]) {
    const found = attempt(run(`gcd(${top},${y})`));
    if (found !== null) return found;
  }
  return null;
}

/** p / f when f divides p exactly (checked by multiplying back in the canonical form), else null. */
function exactQuotient(alg: Algebra, p: Poly, pText: string, f: Poly, fText: string): Poly | null {
  const text = run(`divide(${pText},${fText})`);
  const q = text === null || looksApproximate(text) ? null : fromNerdamerText(alg, text);
  if (q === null || q.size === 0 || hasAtoms(alg.space, q)) return null;
  return alg.equals(alg.mul(q, f), p) ? q : null;
}
