import type { Expr } from "../expr/ast";
import { bin, call, num, sum } from "../expr/build";
import { topLevelTerms } from "../terms";
import type { Algebra } from "./algebra";
import * as C from "./coefficient";
import type { SymbolSpace } from "./space";
import { makeTerm, mergeFactors, monomialKey, type Poly, type Term } from "./term";
import { comboToExpr, factorToExpr, quotient, termParts, trigToExpr } from "./to-expr";

/**
 * The display form of a canonical sum: the same value, written the way an
 * analyst writes it.
 *
 * - Terms are collected by their accelerations and rates (and momenta), each
 *   with its coefficient factored: (m1 + m2)*l1^2*theta1'' rather than
 *   m1*l1^2*theta1'' + m2*l1^2*theta1''. Terms without a rate are collected by
 *   what else they depend on: (m1 + m2)*g*l1*sin(theta1).
 * - Products of sines and cosines come back where they are shorter than the
 *   canonical sum of angles: ½ − ½·cos(2θ) is sin(θ)², and
 *   ½·cos(a − b) − ½·cos(a + b) is sin(a)·sin(b); and sin(2θ) of a
 *   coordinate is 2·sin(θ)·cos(θ), as differentiating sin(θ)² gives it.
 * - A constant sum of three or more terms is factored greedily where a symbol
 *   is shared: m1*l1^2 + m2*l1^2 + m2*l2^2 becomes (m1 + m2)*l1^2 + m2*l2^2.
 *
 * The canonical form stays the engine's form for computing and comparing;
 * this one is only for showing, and is equal to it (tests check both the
 * canonical difference and values at random points).
 *
 * @example formatExpression(displayExpr(alg, residual)) // "(m1 + m2)*l1^2*theta1'' + m2*l1*l2*cos(theta1 - theta2)*theta2'' + …"
 */
export function displayExpr(alg: Algebra, p: Poly): Expr {
  const space = alg.space;
  const groups = new Map<string, { motion: number[]; coefficient: Poly }>();
  for (const t of p.values()) {
    const motion: number[] = [];
    const other: number[] = [];
    for (let i = 0; i < t.f.length; i += 2) (roleOf(space, t.f[i]!) === "motion" ? motion : other).push(t.f[i]!, t.f[i + 1]!);
    const key = motion.join(",");
    let group = groups.get(key);
    if (group === undefined) groups.set(key, (group = { motion, coefficient: new Map() }));
    alg.accumulate(group.coefficient, t.c, other, t.g);
  }
  const moving: { motion: number[]; signed: Signed }[] = [];
  const resting: { piece: Piece; signed: Signed }[] = [];
  for (const { motion, coefficient } of groups.values()) {
    if (motion.length === 0) {
      // Terms free of rates stand on their own, one per state dependence.
      for (const piece of pieces(alg, coefficient)) resting.push({ piece, signed: pieceExpr(space, piece, []) });
    } else moving.push({ motion, signed: collected(alg, coefficient, monomialParts(space, motion)) });
  }
  // A sum with no rates at all (a mass-matrix entry, a denominator) is one coefficient: its common factor goes in front.
  if (moving.length === 0 && resting.length > 1) return signedExpr(collected(alg, p, { numerator: [], denominator: [] }));
  moving.sort((a, b) => compareMotion(space, a.motion, b.motion));
  resting.sort((a, b) => a.piece.order - b.piece.order || comparePieces(a.piece, b.piece));
  return sum([...moving, ...resting].map((r) => r.signed));
}

/**
 * top/bottom in display form, with the number both sides share cancelled:
 * restoring sin(2θ) as 2·sin(θ)·cos(θ) can leave a 2 on each side.
 *
 * @example formatExpression(displayQuotient(alg, top, bottom)) // "(-b*x' + … + F)/(m*sin(theta)^2 + M)"
 */
export function displayQuotient(alg: Algebra, top: Poly, bottom: Poly): Expr {
  let numerator = displayExpr(alg, top);
  let denominator = displayExpr(alg, bottom);
  const a = numericContent(numerator);
  const b = numericContent(denominator);
  if (a !== null && b !== null) {
    const common = C.rational(gcd(a.n, b.n), (a.d / gcd(a.d, b.d)) * b.d);
    if (!C.isOne(common) && C.isExact(common)) {
      const inverse = C.inverse(common);
      numerator = displayExpr(alg, alg.scale(top, inverse));
      denominator = displayExpr(alg, alg.scale(bottom, inverse));
    }
  }
  return denominator.kind === "num" && denominator.value === 1 ? numerator : bin("/", numerator, denominator);
}

/** The positive rational every top-level term of a display tree has as its number factor (gcd over lcm), or null. */
function numericContent(e: Expr): C.Coefficient | null {
  let n = 0;
  let d = 1;
  for (const { term } of topLevelTerms(e)) {
    const factor = { top: 1, bottom: 1 };
    const visit = (x: Expr, below: boolean) => {
      if (x.kind === "neg") visit(x.arg, below);
      else if (x.kind === "bin" && (x.op === "*" || x.op === "/")) {
        visit(x.left, below);
        visit(x.right, x.op === "/" ? !below : below);
      } else if (x.kind === "num") factor[below ? "bottom" : "top"] *= x.value;
    };
    visit(term, false);
    if (!Number.isSafeInteger(factor.top) || !Number.isSafeInteger(factor.bottom) || factor.top === 0) return null;
    n = gcd(n, factor.top);
    d = (d / gcd(d, factor.bottom)) * factor.bottom;
    if (!Number.isSafeInteger(d)) return null;
  }
  return n === 0 ? null : C.rational(n, d);
}

function signedExpr({ negative, term }: Signed): Expr {
  return sum([{ negative, term }]);
}

interface Signed {
  negative: boolean;
  term: Expr;
}

interface Parts {
  numerator: Expr[];
  denominator: Expr[];
}

/** Terms of one coefficient that share their sin/cos product and their state factors. */
interface Piece {
  /** sin/cos factor (a canonical one, or a product restored from the canonical sum), or null. */
  trig: Expr | null;
  /** Sorts pieces with the same order: the angles' symbols and coefficients, sin before cos. */
  trigKey: number[];
  /** Factors that depend on coordinates, time or inputs, flat [id, e, …]. */
  state: number[];
  /** The constant rest: parameters and numbers, one term each. */
  constant: Term[];
  /** 2000 when it depends on a coordinate, 3000 on time, else 4000 (as the canonical term order). */
  order: number;
}

type Role = "motion" | "state" | "constant";

function roleOf(space: SymbolSpace, id: number): Role {
  let state = false;
  for (const d of space.entry(id).dependsOn) {
    const kind = space.kind(d);
    if (kind === "acceleration" || kind === "rate" || kind === "momentum") return "motion";
    if (kind === "coordinate" || kind === "time" || kind === "input") state = true;
  }
  return state ? "state" : "constant";
}

/**
 * Where a group of terms stands: acceleration groups by coordinate first, then
 * rates and momenta as in a quadratic form (x'^2, x'*phi', phi'^2).
 */
function compareMotion(space: SymbolSpace, a: readonly number[], b: readonly number[]): number {
  const rank = (f: readonly number[]) => {
    let acceleration = Infinity;
    const members: [number, number][] = [];
    for (let i = 0; i < f.length; i += 2) {
      const entry = space.entry(f[i]!);
      if (entry.kind === "acceleration") acceleration = Math.min(acceleration, entry.coordinate);
      members.push([entry.coordinate < 0 ? 1e6 + f[i]! : entry.coordinate, f[i + 1]!]);
    }
    members.sort((x, y) => x[0] - y[0]);
    return { acceleration, members };
  };
  const x = rank(a);
  const y = rank(b);
  if (x.acceleration !== y.acceleration) return x.acceleration - y.acceleration;
  for (let i = 0; i < Math.min(x.members.length, y.members.length); i++) {
    const [cx, ex] = x.members[i]!;
    const [cy, ey] = y.members[i]!;
    if (cx !== cy) return cx - cy;
    if (ex !== ey) return ey - ex;
  }
  return x.members.length - y.members.length;
}

function dependenceOrder(space: SymbolSpace, ids: Iterable<number>): number {
  let order = 4000;
  for (const id of ids) {
    for (const d of space.entry(id).dependsOn) {
      const kind = space.kind(d);
      if (kind === "coordinate") order = Math.min(order, 2000);
      else if (kind === "time") order = Math.min(order, 3000);
    }
  }
  return order;
}

/** Factors of a monomial [id, e, …] by print rank, negative powers in the denominator. */
function monomialParts(space: SymbolSpace, f: readonly number[]): Parts {
  const factors: [number, number][] = [];
  for (let i = 0; i < f.length; i += 2) factors.push([f[i]!, f[i + 1]!]);
  factors.sort((a, b) => space.printRank(a[0]) - space.printRank(b[0]));
  const numerator: Expr[] = [];
  const denominator: Expr[] = [];
  for (const [id, e] of factors) {
    if (e > 0) numerator.push(factorToExpr(space, id, e));
    else denominator.push(factorToExpr(space, id, -e));
  }
  return { numerator, denominator };
}

/** coefficient × head, the coefficient factored: one product, or (Σ pieces) with their common factor in front. */
function collected(alg: Algebra, coefficient: Poly, head: Parts): Signed {
  const space = alg.space;
  const found = pieces(alg, coefficient);
  if (found.length === 1) return pieceExpr(space, found[0]!, head.numerator, head.denominator);
  // The factor every piece shares (sin/cos aside) goes in front of the parentheses.
  const whole = found.flatMap((piece) => piece.constant.map((t) => mergeFactors(t.f, piece.state)).map((f, i) => makeTerm(piece.constant[i]!.c, f, null)));
  const { content, monomial } = commonFactor(space, whole);
  const inverse = monomial.map((v, i) => (i % 2 === 1 ? -v : v));
  const inner = [...found]
    .sort((a, b) => (a.order === 4000 ? 0 : 1) - (b.order === 4000 ? 0 : 1) || comparePieces(a, b))
    .map((piece) => {
      const constant = piece.constant.map((t) => makeTerm(C.multiply(t.c, C.inverse(content)), mergeFactors(t.f, keep(space, inverse, "constant")), null));
      return pieceExpr(space, { ...piece, constant, state: mergeFactors(piece.state, keep(space, inverse, "state")) }, []);
    });
  const negative = inner[0]!.negative;
  if (negative) for (const s of inner) s.negative = !s.negative;
  const common = monomialParts(space, monomial);
  const numerator = [...contentNumerator(content), sum(inner), ...common.numerator, ...head.numerator];
  const denominator = [...contentDenominator(content), ...common.denominator, ...head.denominator];
  return { negative, term: quotient({ numerator, denominator }) };
}

/** The factors of a monomial whose symbols have the given role. */
function keep(space: SymbolSpace, f: readonly number[], role: Role): number[] {
  const out: number[] = [];
  for (let i = 0; i < f.length; i += 2) if (roleOf(space, f[i]!) === role) out.push(f[i]!, f[i + 1]!);
  return out;
}

function contentNumerator(c: C.Coefficient): Expr[] {
  if (!C.isExact(c)) return [num(Math.abs(C.toNumber(c)))];
  return Math.abs(c.n) === 1 ? [] : [num(Math.abs(c.n))];
}

function contentDenominator(c: C.Coefficient): Expr[] {
  return C.isExact(c) && c.d !== 1 ? [num(c.d)] : [];
}

/** A piece as a signed product: its factored constant, state factors, sin/cos, then the head. */
function pieceExpr(space: SymbolSpace, piece: Piece, headNumerator: readonly Expr[], headDenominator: readonly Expr[] = []): Signed {
  const constant = factorSum(space, piece.constant);
  const state = monomialParts(space, piece.state);
  const numerator = [...constant.numerator, ...state.numerator, ...(piece.trig ? [piece.trig] : []), ...headNumerator];
  const denominator = [...constant.denominator, ...state.denominator, ...headDenominator];
  return { negative: constant.negative, term: quotient({ numerator, denominator }) };
}

/**
 * The terms of a coefficient split into pieces: sin/cos products restored
 * first, then by sin/cos factor, then by state factors.
 */
function pieces(alg: Algebra, coefficient: Poly): Piece[] {
  const space = alg.space;
  const remaining: Poly = new Map(coefficient);
  const byTrig = new Map<string, { trig: Expr | null; trigKey: number[]; angles: number[]; poly: Poly }>();
  for (const candidate of trigProducts(alg, remaining)) {
    const poly = restore(alg, remaining, candidate.expansion);
    if (poly.size > 0) byTrig.set(`restored:${candidate.name}`, { trig: candidate.tree, trigKey: candidate.key, angles: candidate.angles, poly });
  }
  for (const t of remaining.values()) {
    const key = t.g?.key ?? "";
    let entry = byTrig.get(key);
    if (entry === undefined) {
      const angles: number[] = [];
      if (t.g) for (let i = 0; i < t.g.combo.length; i += 2) angles.push(t.g.combo[i]!);
      const trigKey = t.g ? [...t.g.combo, t.g.sin ? 0 : 1] : [];
      byTrig.set(key, (entry = { trig: t.g ? trigToExpr(space, t.g) : null, trigKey, angles, poly: new Map() }));
    }
    alg.accumulate(entry.poly, t.c, t.f, null);
  }
  const out: Piece[] = [];
  for (const { trig, trigKey, angles, poly } of byTrig.values()) {
    const byState = new Map<string, { state: number[]; constant: Term[] }>();
    for (const t of poly.values()) {
      const state: number[] = [];
      const constant: number[] = [];
      for (let i = 0; i < t.f.length; i += 2) (roleOf(space, t.f[i]!) === "state" ? state : constant).push(t.f[i]!, t.f[i + 1]!);
      const key = state.join(",");
      let entry = byState.get(key);
      if (entry === undefined) byState.set(key, (entry = { state, constant: [] }));
      entry.constant.push(makeTerm(t.c, constant, null));
    }
    for (const { state, constant } of byState.values()) {
      const ids = [...angles];
      for (let i = 0; i < state.length; i += 2) ids.push(state[i]!);
      out.push({ trig, trigKey, state, constant, order: dependenceOrder(space, ids) });
    }
  }
  return out;
}

interface TrigProduct {
  name: string;
  tree: Expr;
  /** Sorts it among other pieces (see Piece.trigKey). */
  key: number[];
  angles: number[];
  /** The product in canonical form: a sum of sines or cosines of angle sums. */
  expansion: Poly;
}

/** Products already expanded, per algebra (a derivation asks for the same few many times). */
const expansions = new WeakMap<Algebra, Map<string, TrigProduct>>();

/**
 * Products worth restoring in a coefficient: sin²u and cos²u where cos(2u)
 * and a term free of sin/cos appear, sin(u)·cos(u) for sin(2u) of
 * coordinates, and the four products of sin/cos a and sin/cos b where both
 * a − b and a + b appear (a, b single angles).
 */
function trigProducts(alg: Algebra, p: Poly): TrigProduct[] {
  const space = alg.space;
  const simple = (id: number) => {
    const kind = space.kind(id);
    return kind === "coordinate" || kind === "parameter" || kind === "phase";
  };
  let plain = false;
  const combos = new Map<string, { combo: readonly number[]; sin: boolean }>();
  for (const t of p.values()) {
    if (t.g === null) plain = true;
    else combos.set(`${t.g.sin ? "s" : "c"}${t.g.combo.join(",")}`, { combo: t.g.combo, sin: t.g.sin });
  }
  const squares = new Map<string, number[]>();
  const doubled = new Map<string, number[]>();
  const pairs = new Map<string, [number, number]>();
  for (const { combo, sin } of combos.values()) {
    // 2u with u a combination of whole multiples.
    const half: number[] = [];
    for (let i = 0; i < combo.length; i += 2) {
      const c = combo[i + 1]! / 2;
      if (!Number.isInteger(c) || !simple(combo[i]!)) {
        half.length = 0;
        break;
      }
      half.push(combo[i]!, c);
    }
    if (half.length > 0) {
      if (!sin && plain) squares.set(half.join(","), half);
      const coordinates = half.every((v, i) => i % 2 === 1 || space.kind(v) === "coordinate");
      if (sin && coordinates) doubled.set(half.join(","), half);
    }
    if (combo.length === 4 && combo[1] === 1 && combo[3] === -1 && simple(combo[0]!) && simple(combo[2]!)) {
      const partner = `${combo[0]},1,${combo[2]},1`;
      if (combos.has(`s${partner}`) || combos.has(`c${partner}`)) pairs.set(`${combo[0]},${combo[2]}`, [combo[0]!, combo[2]!]);
    }
  }
  if (squares.size === 0 && doubled.size === 0 && pairs.size === 0) return [];
  let cache = expansions.get(alg);
  if (cache === undefined) expansions.set(alg, (cache = new Map()));
  const known = cache;
  const angle = (u: readonly number[]) => {
    const poly: Poly = new Map();
    for (let i = 0; i < u.length; i += 2) alg.addInto(poly, alg.symbol(u[i]!), C.fromFraction(u[i + 1]!));
    return poly;
  };
  /** sin/cos u times sin/cos v, u and v combinations [id, c, …]. */
  const product = (sinA: boolean, u: readonly number[], sinB: boolean, v: readonly number[]): TrigProduct => {
    const same = u.join(",") === v.join(",");
    const name = `${sinA ? "s" : "c"}(${u.join(",")})*${sinB ? "s" : "c"}(${v.join(",")})`;
    const found = known.get(name);
    if (found !== undefined) return found;
    const tree = (sin: boolean, w: readonly number[]) => call(sin ? "sin" : "cos", comboToExpr(space, w));
    const made: TrigProduct = {
      name,
      tree: same && sinA === sinB ? bin("^", tree(sinA, u), num(2)) : bin("*", tree(sinA, u), tree(sinB, v)),
      key: same && sinA === sinB ? [...u, sinA ? 0 : 1] : [...u, sinA ? 0 : 1, ...v, sinB ? 0 : 1],
      angles: [...u, ...v].filter((_, i) => i % 2 === 0),
      expansion: alg.mul(alg.call(sinA ? "sin" : "cos", angle(u)), alg.call(sinB ? "sin" : "cos", angle(v))),
    };
    known.set(name, made);
    return made;
  };
  const out: TrigProduct[] = [];
  for (const u of squares.values()) out.push(product(true, u, true, u), product(false, u, false, u));
  for (const u of doubled.values()) out.push(product(true, u, false, u));
  for (const [a, b] of pairs.values()) {
    for (const [sinA, sinB] of [
      [true, true],
      [false, false],
      [true, false],
      [false, true],
    ] as const)
      out.push(product(sinA, [a, 1], sinB, [b, 1]));
  }
  return out;
}

/** Pieces of the same dependence, in a fixed order: by sin/cos, then by state factors. */
function comparePieces(a: Piece, b: Piece): number {
  return compareKeys(a.trigKey, b.trigKey) || compareKeys(a.state, b.state);
}

function compareKeys(a: readonly number[], b: readonly number[]): number {
  for (let i = 0; i < Math.min(a.length, b.length); i++) if (a[i] !== b[i]) return a[i]! - b[i]!;
  return a.length - b.length;
}

/**
 * Takes every k·m·expansion out of `p` (m a monomial, k a number) whose terms
 * are all there with exactly those coefficients; returns Σ k·m.
 */
function restore(alg: Algebra, p: Poly, expansion: Poly): Poly {
  const out: Poly = new Map();
  const terms = [...expansion.values()];
  const lead = terms.find((t) => t.g !== null);
  if (lead === undefined) return out;
  const others = terms.filter((t) => t !== lead);
  for (const t of [...p.values()]) {
    if (!p.has(t.key) || t.g?.key !== lead.g!.key) continue;
    const k = C.multiply(t.c, C.inverse(lead.c));
    const matches = others.map((e) => p.get(monomialKey(t.f, e.g)));
    if (!matches.every((m, i) => m !== undefined && C.key(m.c) === C.key(C.multiply(k, others[i]!.c)))) continue;
    p.delete(t.key);
    for (const m of matches) p.delete(m!.key);
    alg.accumulate(out, k, t.f, null);
  }
  return out;
}

/**
 * ±(content × common monomial × inner sum) for constant terms; the inner sum
 * starts with a positive term and is itself factored where a symbol is shared.
 */
function factorSum(space: SymbolSpace, terms: readonly Term[]): Parts & { negative: boolean } {
  if (terms.length === 1) {
    const t = terms[0]!;
    return { negative: C.toNumber(t.c) < 0, ...termParts(space, t) };
  }
  const { content, monomial } = commonFactor(space, terms);
  const inverse = monomial.map((v, i) => (i % 2 === 1 ? -v : v));
  let reduced = terms.map((t) => makeTerm(C.multiply(t.c, C.inverse(content)), mergeFactors(t.f, inverse), null)).sort((a, b) => compareKeys(a.f, b.f));
  const negative = C.toNumber(reduced[0]!.c) < 0;
  if (negative) reduced = reduced.map((t) => makeTerm(C.negate(t.c), t.f, null));
  const common = monomialParts(space, monomial);
  return {
    negative,
    numerator: [...contentNumerator(content), sum(partialFactor(space, reduced)), ...common.numerator],
    denominator: [...contentDenominator(content), ...common.denominator],
  };
}

/** Groups the terms that share the most common symbol power (ties: the higher power, then the later symbol), recursively. */
function plainTerm(space: SymbolSpace, t: Term): Signed {
  return { negative: C.toNumber(t.c) < 0, term: quotient(termParts(space, t)) };
}

function partialFactor(space: SymbolSpace, terms: readonly Term[]): Signed[] {
  const plain = (t: Term) => plainTerm(space, t);
  if (terms.length <= 2) return terms.map(plain);
  let best: { id: number; e: number; count: number } | null = null;
  const seen = new Set<string>();
  for (const t of terms) {
    for (let i = 0; i < t.f.length; i += 2) {
      const id = t.f[i]!;
      const e = t.f[i + 1]!;
      if (e <= 0 || seen.has(`${id}^${e}`)) continue;
      seen.add(`${id}^${e}`);
      const count = terms.filter((u) => exponentOf(u, id) >= e).length;
      if (count < 2 || count === terms.length) continue;
      if (best === null || count > best.count || (count === best.count && (e > best.e || (e === best.e && space.printRank(id) > space.printRank(best.id)))))
        best = { id, e, count };
    }
  }
  if (best === null) return terms.map(plain);
  const { id, e } = best;
  const group = terms.filter((u) => exponentOf(u, id) >= e);
  const rest = terms.filter((u) => exponentOf(u, id) < e);
  const factored = factorSum(space, group);
  const grouped: Signed = { negative: factored.negative, term: quotient(factored) };
  const restSigned = partialFactor(space, rest);
  // The group stands where its first term stood.
  const at = terms.findIndex((u) => exponentOf(u, id) >= e);
  const before = terms.slice(0, at).length;
  return [...restSigned.slice(0, before), grouped, ...restSigned.slice(before)];
}

function exponentOf(t: Term, id: number): number {
  for (let i = 0; i < t.f.length; i += 2) if (t.f[i] === id) return t.f[i + 1]!;
  return 0;
}

/**
 * The positive rational content (gcd of numerators over lcm of denominators;
 * 1 when a coefficient is a float) and the monomial every term shares
 * ([id, e, …]: the smallest positive or the largest negative power).
 */
function commonFactor(space: SymbolSpace, terms: readonly Term[]): { content: C.Coefficient; monomial: number[] } {
  let n = 0;
  let d = 1;
  let exact = true;
  for (const t of terms) {
    if (!C.isExact(t.c)) {
      exact = false;
      break;
    }
    n = gcd(n, Math.abs(t.c.n));
    d = (d / gcd(d, t.c.d)) * t.c.d;
    if (!Number.isSafeInteger(d)) {
      exact = false;
      break;
    }
  }
  const content = exact && n !== 0 ? C.rational(n, d) : C.ONE;
  const ids = new Set<number>();
  for (const t of terms) for (let i = 0; i < t.f.length; i += 2) ids.add(t.f[i]!);
  const monomial: number[] = [];
  for (const id of [...ids].sort((a, b) => a - b)) {
    const powers = terms.map((t) => exponentOf(t, id));
    if (powers.every((e) => e > 0)) monomial.push(id, Math.min(...powers));
    else if (powers.every((e) => e < 0)) monomial.push(id, Math.max(...powers));
  }
  return { content, monomial };
}

function gcd(x: number, y: number): number {
  while (y !== 0) [x, y] = [y, x % y];
  return x;
}
