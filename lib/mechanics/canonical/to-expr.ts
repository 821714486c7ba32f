import type { Expr } from "../expr/ast";
import { bin, call, negateFirst, num, pi, product, sum, sym, times } from "../expr/build";
import * as C from "./coefficient";
import { formatExpression } from "../expr/parse";
import type { SymbolSpace } from "./space";
import type { Poly, Term, Trig } from "./term";

/**
 * Canonical sums as expression trees, compact like the textbook forms:
 * `m2*l1*l2*theta2'^2*sin(theta1 - theta2)`, `k/r^2`, `m*x'^2/2`. Terms come
 * in output order (accelerations by coordinate, then rates, then the rest);
 * inside a term the number comes first, then the factors by kind, then sin or
 * cos, over a denominator of the number and the negative powers. The tree is
 * what leaves the engine; formatExpression prints it, toLatex renders it.
 *
 * @example formatExpression(polyToExpr(space, p)) // "m*l^2*theta'' + m*g*l*sin(theta)"
 */
export function polyToExpr(space: SymbolSpace, p: Poly): Expr {
  return sum(orderedRows(space, p).map((row) => ({ negative: C.toNumber(row.term.c) < 0, term: row.magnitude })));
}

/** The terms of a sum in output order: acceleration terms first (by coordinate), then rate terms, then the rest; by text within each. */
export function orderedTerms(space: SymbolSpace, p: Poly): Term[] {
  return orderedRows(space, p).map((row) => row.term);
}

function orderedRows(space: SymbolSpace, p: Poly): { term: Term; magnitude: Expr }[] {
  const rows = [...p.values()].map((term) => {
    const magnitude = termMagnitude(space, term);
    return { term, magnitude, text: formatExpression(magnitude), order: termOrder(space, term) };
  });
  rows.sort((a, b) => a.order - b.order || (a.text < b.text ? -1 : a.text > b.text ? 1 : 0));
  return rows;
}

/** Accelerations (by coordinate), then rates, then coordinates, then time, then constants and inputs. */
function termOrder(space: SymbolSpace, t: Term): number {
  let accel = Infinity;
  let rate = false;
  let coordinate = false;
  let time = false;
  const note = (id: number) => {
    for (const d of space.entry(id).dependsOn) {
      const entry = space.entry(d);
      if (entry.kind === "acceleration") accel = Math.min(accel, entry.coordinate);
      else if (entry.kind === "rate") rate = true;
      else if (entry.kind === "coordinate") coordinate = true;
      else if (entry.kind === "time") time = true;
    }
  };
  for (let i = 0; i < t.f.length; i += 2) note(t.f[i]!);
  if (t.g) for (let i = 0; i < t.g.combo.length; i += 2) note(t.g.combo[i]!);
  if (accel !== Infinity) return accel;
  return rate ? 1000 : coordinate ? 2000 : time ? 3000 : 4000;
}

/** One term with its sign, as a tree. */
export function termToExpr(space: SymbolSpace, t: Term): Expr {
  const magnitude = termMagnitude(space, t);
  return C.toNumber(t.c) < 0 ? negateFirst(magnitude) : magnitude;
}

/** |coefficient| × factors × sin/cos over the denominator. */
export function termMagnitude(space: SymbolSpace, t: Term): Expr {
  return quotient(termParts(space, t));
}

/** The factors of a term's magnitude: the number first, then the factors by kind, then sin or cos; over the denominator. */
export function termParts(space: SymbolSpace, t: Term): { numerator: Expr[]; denominator: Expr[] } {
  const numerator: Expr[] = [];
  const denominator: Expr[] = [];
  const factors: [number, number][] = [];
  for (let i = 0; i < t.f.length; i += 2) factors.push([t.f[i]!, t.f[i + 1]!]);
  factors.sort((a, b) => space.printRank(a[0]) - space.printRank(b[0]));
  for (const [id, e] of factors) {
    if (e > 0) numerator.push(factorToExpr(space, id, e));
    else denominator.push(factorToExpr(space, id, -e));
  }
  if (t.g !== null) numerator.push(trigToExpr(space, t.g));
  if (C.isExact(t.c)) {
    const n = Math.abs(t.c.n);
    if (n !== 1 || numerator.length === 0) numerator.unshift(num(n));
    if (t.c.d !== 1) denominator.unshift(num(t.c.d));
  } else {
    const magnitude = Math.abs(C.toNumber(t.c));
    if (magnitude !== 1 || numerator.length === 0) numerator.unshift(num(magnitude));
  }
  return { numerator, denominator };
}

/** Π numerator / Π denominator (no bar when the denominator is empty); a factor 1 beside others is dropped. */
export function quotient({ numerator, denominator }: { numerator: readonly Expr[]; denominator: readonly Expr[] }): Expr {
  const top = numerator.length > 1 && numerator.some(one) ? numerator.filter((e) => !one(e)) : numerator;
  const bottom = denominator.some(one) ? denominator.filter((e) => !one(e)) : denominator;
  return bottom.length === 0 ? product(top) : bin("/", product(top), product(bottom));
}

function one(e: Expr): boolean {
  return e.kind === "num" && e.value === 1;
}

/**
 * Trees of factors and sines already built, per symbol table: a derivation
 * writes the same few thousands of times. Trees are never changed after they
 * are built, so results may share them.
 */
const built = new WeakMap<SymbolSpace, Map<string, Expr>>();

function memo(space: SymbolSpace, key: string, make: () => Expr): Expr {
  let cache = built.get(space);
  if (cache === undefined) built.set(space, (cache = new Map()));
  let tree = cache.get(key);
  if (tree === undefined) cache.set(key, (tree = make()));
  return tree;
}

/** One factor of a term, symbol `id` to the power `e` (> 0). */
export function factorToExpr(space: SymbolSpace, id: number, e: number): Expr {
  return memo(space, `${id}^${e}`, () => buildFactor(space, id, e));
}

function buildFactor(space: SymbolSpace, id: number, e: number): Expr {
  const entry = space.entry(id);
  switch (entry.kind) {
    case "function":
      return withExponent(call(entry.fn!, polyToExpr(space, entry.arg!)), e);
    case "power": {
      const base = polyToExpr(space, entry.base!);
      return e === 0.5 ? call("sqrt", base) : withExponent(base, e);
    }
    case "phase":
      return withExponent(phaseToExpr(space, entry.phase!), e);
    case "rate":
      return withExponent(sym(entry.name, 1), e);
    case "acceleration":
      return withExponent(sym(entry.name, 2), e);
    case "pi":
      return withExponent(pi(), e);
    case "one":
      return num(1);
    default:
      return e === 0.5 ? call("sqrt", sym(entry.name)) : withExponent(sym(entry.name), e);
  }
}

function withExponent(base: Expr, e: number): Expr {
  if (e === 1) return base;
  if (Number.isInteger(e)) return bin("^", base, num(e));
  const [p, q] = toFraction(e);
  if (!Number.isFinite(q)) return bin("^", base, num(e));
  return bin("^", base, q === 1 ? num(p) : bin("/", num(p), num(q)));
}

/** A small-denominator fraction equal to x (to 1e-12), or [x, Infinity] if none. */
export function toFraction(x: number): [number, number] {
  for (let q = 1; q <= 1000; q++) {
    const p = Math.round(x * q);
    if (Math.abs(p / q - x) < 1e-12) return [p, q];
  }
  return [x, Infinity];
}

/** sin or cos of an angle combination: `cos(theta1 - theta2)`, `sin(omega*t + phi)`. */
export function trigToExpr(space: SymbolSpace, g: Trig): Expr {
  return memo(space, g.key, () => buildTrig(space, g));
}

function buildTrig(space: SymbolSpace, g: Trig): Expr {
  return call(g.sin ? "sin" : "cos", comboToExpr(space, g.combo));
}

/** An angle combination Σ c·b as a sum: `theta1 - theta2`, `2*omega*t + phi`. */
export function comboToExpr(space: SymbolSpace, combo: readonly number[]): Expr {
  const members: { negative: boolean; term: Expr }[] = [];
  for (let i = 0; i < combo.length; i += 2) {
    const entry = space.entry(combo[i]!);
    const c = combo[i + 1]!;
    const magnitude = Math.abs(c);
    let body: Expr;
    if (entry.kind === "one") {
      const [p, q] = toFraction(magnitude);
      body = Number.isFinite(q) && q !== 1 ? bin("/", num(p), num(q)) : num(magnitude);
    } else {
      const angle = angleToExpr(space, combo[i]!);
      const [p, q] = toFraction(magnitude);
      if (!Number.isFinite(q)) body = times(num(magnitude), angle);
      else {
        body = p === 1 ? angle : times(num(p), angle);
        if (q !== 1) body = bin("/", body, num(q));
      }
    }
    members.push({ negative: c < 0, term: body });
  }
  return sum(members);
}

/** One member of an angle combination: a coordinate or parameter, π, or a phase. */
export function angleToExpr(space: SymbolSpace, id: number): Expr {
  const entry = space.entry(id);
  return entry.kind === "phase" ? phaseToExpr(space, entry.phase!) : entry.kind === "pi" ? pi() : sym(entry.name);
}

/** monomial·t: `omega*t`, `t/tau`, `t`. */
function phaseToExpr(space: SymbolSpace, monomial: Term): Expr {
  const m = termMagnitude(space, monomial);
  const t = sym("t");
  if (m.kind === "num" && m.value === 1) return t;
  if (m.kind === "bin" && m.op === "/") {
    const top = m.left;
    return bin("/", top.kind === "num" && top.value === 1 ? t : times(top, t), m.right);
  }
  return times(m, t);
}
