import { EngineLimitError } from "../errors";
import type { FunctionName } from "../expr/ast";
import * as C from "./coefficient";
import { normaliseArgument } from "./general";
import type { SymbolSpace } from "./space";
import { canonicalTrig, combineAngles, makeTerm, mergeFactors, monomialKey, type Poly, type Term, type Trig } from "./term";

export interface AlgebraLimits {
  /** Largest number of terms one intermediate sum may hold. */
  maxTerms: number;
  /** Largest number of term pairs one multiplication may visit. */
  maxProductPairs: number;
}

export const DEFAULT_ALGEBRA_LIMITS: AlgebraLimits = { maxTerms: 200_000, maxProductPairs: 1_000_000 };

/**
 * Arithmetic on canonical sums (see term.ts). Every result is canonical:
 * like terms collected, products of sines and cosines reduced by the
 * product-to-sum rules, zero terms dropped.
 *
 * @example
 * const alg = new Algebra(space);
 * alg.add(alg.mul(sin(a), sin(a)), alg.mul(cos(a), cos(a))) // → the constant 1
 */
export class Algebra {
  constructor(
    readonly space: SymbolSpace,
    readonly limits: AlgebraLimits = DEFAULT_ALGEBRA_LIMITS,
  ) {}

  zero(): Poly {
    return new Map();
  }

  constant(c: C.Coefficient): Poly {
    const out: Poly = new Map();
    if (!C.isZero(c)) out.set("", makeTerm(c, [], null));
    return out;
  }

  /** The symbol `id` raised to `exponent`. */
  symbol(id: number, exponent = 1): Poly {
    const f = [id, exponent];
    return new Map([[monomialKey(f, null), makeTerm(C.ONE, f, null)]]);
  }

  fromTerm(term: Term): Poly {
    return new Map([[term.key, term]]);
  }

  /** Adds c·Π f·g into `out` in place. */
  accumulate(out: Poly, c: C.Coefficient, f: readonly number[], g: Trig | null): void {
    if (C.isZero(c)) return;
    const key = monomialKey(f, g);
    const found = out.get(key);
    if (found === undefined) {
      out.set(key, { c, f, g, key });
      return;
    }
    const sum = C.add(found.c, c);
    if (C.isZero(sum)) out.delete(key);
    else out.set(key, { c: sum, f: found.f, g: found.g, key });
  }

  addInto(out: Poly, p: Poly, scale: C.Coefficient = C.ONE): Poly {
    const unit = C.isOne(scale);
    for (const t of p.values()) this.accumulate(out, unit ? t.c : C.multiply(t.c, scale), t.f, t.g);
    return out;
  }

  add(...terms: Poly[]): Poly {
    const out: Poly = new Map(terms[0] ?? []);
    for (let i = 1; i < terms.length; i++) this.addInto(out, terms[i]!);
    return out;
  }

  sub(a: Poly, b: Poly): Poly {
    return this.addInto(new Map(a), b, C.MINUS_ONE);
  }

  scale(a: Poly, c: C.Coefficient): Poly {
    if (C.isZero(c)) return new Map();
    const out: Poly = new Map();
    for (const t of a.values()) out.set(t.key, { c: C.multiply(t.c, c), f: t.f, g: t.g, key: t.key });
    return out;
  }

  negate(a: Poly): Poly {
    return this.scale(a, C.MINUS_ONE);
  }

  /** Adds scale·a·b into `out` for two terms (one or two terms after product-to-sum). */
  mulTermsInto(out: Poly, a: Term, b: Term, scale: C.Coefficient = C.ONE): void {
    let c = C.multiply(a.c, b.c);
    if (!C.isOne(scale)) c = C.multiply(c, scale);
    const f = mergeFactors(a.f, b.f);
    if (this.space.hasPowerAtoms && this.hasIntegralPowerAtom(f)) {
      this.expandIntegralPowers(out, c, f, a.g, b.g);
      return;
    }
    if (a.g === null || b.g === null) {
      this.accumulate(out, c, f, a.g ?? b.g);
      return;
    }
    this.trigProductInto(out, c, f, a.g, b.g);
  }

  /** c·f·g1·g2 reduced by the product-to-sum rules. */
  private trigProductInto(out: Poly, c: C.Coefficient, f: readonly number[], g1: Trig, g2: Trig): void {
    const half = C.multiply(c, C.HALF);
    const diff = combineAngles(this.space, g1.combo, g2.combo, -1);
    const sum = combineAngles(this.space, g1.combo, g2.combo, 1);
    // sin a sin b = ½[cos(a−b) − cos(a+b)]      cos a cos b = ½[cos(a−b) + cos(a+b)]
    // sin a cos b = ½[sin(a+b) + sin(a−b)]      cos a sin b = ½[sin(a+b) − sin(a−b)]
    let parts: [boolean, number[], 1 | -1][];
    if (g1.sin && g2.sin)
      parts = [
        [false, diff, 1],
        [false, sum, -1],
      ];
    else if (!g1.sin && !g2.sin)
      parts = [
        [false, diff, 1],
        [false, sum, 1],
      ];
    else if (g1.sin)
      parts = [
        [true, sum, 1],
        [true, diff, 1],
      ];
    else
      parts = [
        [true, sum, 1],
        [true, diff, -1],
      ];
    for (const [sin, combo, sign] of parts) {
      const canonical = canonicalTrig(this.space, sin, combo);
      if (canonical.sign === 0) continue;
      this.accumulate(out, sign * canonical.sign === 1 ? half : C.negate(half), f, canonical.trig);
    }
  }

  private hasIntegralPowerAtom(f: readonly number[]): boolean {
    for (let i = 0; i < f.length; i += 2) {
      const e = f[i + 1]!;
      if (e > 0 && Number.isInteger(e) && this.space.kind(f[i]!) === "power") return true;
    }
    return false;
  }

  /** A power atom whose exponent became a positive integer is expanded back into its base. */
  private expandIntegralPowers(out: Poly, c: C.Coefficient, f: readonly number[], g1: Trig | null, g2: Trig | null): void {
    const rest: number[] = [];
    let expanded: Poly = this.constant(c);
    for (let i = 0; i < f.length; i += 2) {
      const id = f[i]!;
      const e = f[i + 1]!;
      if (e > 0 && Number.isInteger(e) && this.space.kind(id) === "power") {
        expanded = this.mul(expanded, this.powInt(this.space.entry(id).base!, e));
      } else rest.push(id, e);
    }
    let restPoly: Poly = this.fromTerm(makeTerm(C.ONE, rest, null));
    if (g1) restPoly = this.mul(restPoly, this.fromTerm(makeTerm(C.ONE, [], g1)));
    if (g2) restPoly = this.mul(restPoly, this.fromTerm(makeTerm(C.ONE, [], g2)));
    this.addInto(out, this.mul(expanded, restPoly));
  }

  mul(a: Poly, b: Poly): Poly {
    if (a.size === 0 || b.size === 0) return new Map();
    this.checkProduct(a, b);
    if (a.size > b.size) [a, b] = [b, a];
    const out: Poly = new Map();
    for (const ta of a.values()) for (const tb of b.values()) this.mulTermsInto(out, ta, tb);
    this.checkSize(out);
    return out;
  }

  /** a·b added into `out` (scaled). */
  mulInto(out: Poly, a: Poly, b: Poly, scale: C.Coefficient = C.ONE): Poly {
    this.checkProduct(a, b);
    for (const ta of a.values()) for (const tb of b.values()) this.mulTermsInto(out, ta, tb, scale);
    this.checkSize(out);
    return out;
  }

  /** Refuses a product before doing it when it would take too long (untrusted input like (a+b+…)^30). */
  private checkProduct(a: Poly, b: Poly): void {
    if (a.size * b.size > this.limits.maxProductPairs) {
      throw new EngineLimitError("terms", `a product of ${a.size} by ${b.size} terms is larger than the engine accepts`);
    }
  }

  private checkSize(p: Poly): void {
    if (p.size > this.limits.maxTerms) {
      throw new EngineLimitError("terms", `an intermediate expression grew beyond ${this.limits.maxTerms} terms`);
    }
  }

  /** a^k for an integer k ≥ 0, by repeated squaring. */
  powInt(a: Poly, k: number): Poly {
    let result = this.constant(C.ONE);
    let base = a;
    while (k > 0) {
      if (k & 1) result = this.mul(result, base);
      k >>= 1;
      if (k > 0) base = this.mul(base, base);
    }
    return result;
  }

  /**
   * base^exponent for a constant exponent. Inside the class where possible
   * (integer powers, roots of parameters); otherwise a power atom.
   * Symbols other than parameters are not assumed positive, so (x^2)^(1/2)
   * stays an atom rather than becoming x.
   */
  power(base: Poly, exponent: number): Poly {
    if (exponent === 0) return this.constant(C.ONE);
    if (base.size === 0) {
      if (exponent > 0) return new Map();
      throw new RangeError("division by zero");
    }
    if (Number.isInteger(exponent) && exponent > 0) return this.powInt(base, exponent);
    if (base.size > 1) {
      // Outside the class: one atom for equal bases, e.g. (1/(x+1) + 1)^(1/2) and ((x+2)/(x+1))^(1/2).
      const normal = normaliseArgument(this, base);
      if (normal !== base) return this.power(normal, exponent);
    }
    if (base.size === 1) {
      const term = base.values().next().value!;
      if (term.g === null) {
        if (Number.isInteger(exponent)) return this.fromTerm(this.termPower(term, exponent));
        const distributable = this.rootDistributes(term);
        const root = C.rationalRoot(term.c, exponent);
        if (distributable && (root !== null || term.c.n > 0)) {
          const f: number[] = [];
          for (let i = 0; i < term.f.length; i += 2) f.push(term.f[i]!, term.f[i + 1]! * exponent);
          const inner = this.fromTerm(makeTerm(root ?? C.ONE, f, null));
          return root !== null ? inner : this.mul(inner, this.powerAtomPoly(this.constant(term.c), exponent));
        }
      }
      return this.powerAtomPoly(base, exponent);
    }
    if (Number.isInteger(exponent)) {
      // Normalise the base (integer coefficients without common factor, leading term positive)
      // so that 1/(2a+2b) and 1/(a+b)/2 share one atom.
      const content = contentOf(base);
      if (content !== null && !C.isOne(content)) {
        return this.scale(this.powerAtomPoly(this.scale(base, C.inverse(content)), exponent), C.power(content, exponent));
      }
    }
    return this.powerAtomPoly(base, exponent);
  }

  private rootDistributes(term: Term): boolean {
    for (let i = 0; i < term.f.length; i += 2) {
      const kind = this.space.kind(term.f[i]!);
      if (kind !== "parameter" && kind !== "pi" && kind !== "power") return false;
    }
    return true;
  }

  /** term^k for an integer k, term without sin/cos. */
  termPower(term: Term, k: number): Term {
    const f: number[] = [];
    for (let i = 0; i < term.f.length; i += 2) f.push(term.f[i]!, term.f[i + 1]! * k);
    return makeTerm(C.power(term.c, k), f, null);
  }

  private powerAtomPoly(base: Poly, exponent: number): Poly {
    const id = this.space.powerAtom(base, polyKey(base), this.dependencies(base));
    return this.symbol(id, exponent);
  }

  divide(a: Poly, b: Poly): Poly {
    if (b.size === 0) throw new RangeError("division by zero");
    if (b.size === 1) {
      const term = b.values().next().value!;
      if (term.g === null) return this.mul(a, this.fromTerm(this.termPower(term, -1)));
    }
    const ratio = proportion(a, b);
    if (ratio !== null) return this.constant(ratio);
    return this.mul(a, this.power(b, -1));
  }

  /** F(arg) for a whitelisted function: sin/cos of angle combinations stay in the class. */
  call(fn: FunctionName, arg: Poly): Poly {
    if (fn === "sqrt") return this.power(arg, 0.5);
    if (fn === "sin" || fn === "cos") {
      const combo = this.angleCombination(arg);
      if (combo !== null) {
        const { sign, trig } = canonicalTrig(this.space, fn === "sin", combo);
        if (sign === 0) return new Map();
        return this.fromTerm(makeTerm(sign === 1 ? C.ONE : C.MINUS_ONE, [], trig));
      }
    }
    if (arg.size === 0) {
      switch (fn) {
        case "exp":
        case "cosh":
        case "cos":
          return this.constant(C.ONE);
        case "acos":
          return this.scale(this.symbol(this.space.pi), C.HALF);
        case "log":
          throw new RangeError("log(0) is undefined");
        default:
          return new Map();
      }
    }
    if (fn === "abs" && arg.size === 1) {
      const term = arg.values().next().value!;
      if (term.f.length === 0 && term.g === null) return this.constant(C.toNumber(term.c) < 0 ? C.negate(term.c) : term.c);
    }
    const normal = normaliseArgument(this, arg);
    if (normal !== arg) return this.call(fn, normal);
    const id = this.space.functionAtom(fn, arg, polyKey(arg), this.dependencies(arg));
    return this.symbol(id, 1);
  }

  /** The argument as Σ c·(angle symbol), or null when it is not such a combination. */
  private angleCombination(arg: Poly): number[] | null {
    const pairs: [number, number][] = [];
    for (const term of arg.values()) {
      if (term.g !== null) return null;
      const c = C.toNumber(term.c);
      const f = term.f;
      if (f.length === 0) {
        pairs.push([this.space.one, c]);
        continue;
      }
      if (f.length === 2 && f[1] === 1 && this.space.angleRank(f[0]!) !== undefined) {
        pairs.push([f[0]!, c]);
        continue;
      }
      // monomial·t with a constant monomial: a phase with known rate.
      let timeAt = -1;
      let constantRest = true;
      for (let i = 0; i < f.length; i += 2) {
        if (f[i] === this.space.time) timeAt = f[i + 1] === 1 ? i : -2;
        else if (!this.space.isConstant(f[i]!)) constantRest = false;
      }
      if (timeAt < 0 || !constantRest) return null;
      const monomial = makeTerm(C.ONE, f.slice(0, timeAt).concat(f.slice(timeAt + 2)), null);
      pairs.push([this.space.phaseAtom(monomial), c]);
    }
    pairs.sort((x, y) => this.space.angleRank(x[0])! - this.space.angleRank(y[0])!);
    return pairs.flat();
  }

  /** Plain symbols (coordinates, rates, t, parameters…) a sum depends on, through atoms too. */
  dependencies(p: Poly): Set<number> {
    const out = new Set<number>();
    for (const t of p.values()) {
      for (let i = 0; i < t.f.length; i += 2) for (const d of this.space.entry(t.f[i]!).dependsOn) out.add(d);
      if (t.g) for (let i = 0; i < t.g.combo.length; i += 2) for (const d of this.space.entry(t.g.combo[i]!).dependsOn) out.add(d);
    }
    return out;
  }

  dependsOn(p: Poly, id: number): boolean {
    for (const t of p.values()) {
      for (let i = 0; i < t.f.length; i += 2) if (this.space.entry(t.f[i]!).dependsOn.has(id)) return true;
      if (t.g) for (let i = 0; i < t.g.combo.length; i += 2) if (this.space.entry(t.g.combo[i]!).dependsOn.has(id)) return true;
    }
    return false;
  }

  /** The terms in which `id` appears to exactly the power `exponent` (0: does not appear), with it removed. */
  coefficientOf(p: Poly, id: number, exponent: number): Poly {
    const out: Poly = new Map();
    for (const t of p.values()) {
      let e = 0;
      let at = -1;
      for (let i = 0; i < t.f.length; i += 2) {
        if (t.f[i] === id) {
          e = t.f[i + 1]!;
          at = i;
          break;
        }
      }
      if (e !== exponent) continue;
      const f = at < 0 ? t.f : t.f.slice(0, at).concat(t.f.slice(at + 2));
      this.accumulate(out, t.c, f, t.g);
    }
    return out;
  }

  equals(a: Poly, b: Poly): boolean {
    if (a.size !== b.size) return false;
    for (const [k, t] of a) {
      const u = b.get(k);
      if (!u || C.key(u.c) !== C.key(t.c)) return false;
    }
    return true;
  }
}

/** A canonical text key for a whole sum (used to identify atoms). */
export function polyKey(p: Poly): string {
  return [...p.values()]
    .map((t) => `${C.key(t.c)}*${t.key}`)
    .sort()
    .join(";");
}

function leadingTerm(p: Poly): Term {
  let best: Term | null = null;
  for (const t of p.values()) if (best === null || t.key < best.key) best = t;
  return best!;
}

function gcd(a: number, b: number): number {
  while (b !== 0) [a, b] = [b, a % b];
  return Math.abs(a);
}

/** ±gcd(numerators)/lcm(denominators), signed like the leading term; null when a coefficient is a float. */
function contentOf(p: Poly): C.Coefficient | null {
  let n = 0;
  let d = 1;
  for (const t of p.values()) {
    if (!C.isExact(t.c)) return null;
    n = gcd(n, t.c.n);
    d = (d / gcd(d, t.c.d)) * t.c.d;
    if (!Number.isSafeInteger(d)) return null;
  }
  const sign = C.toNumber(leadingTerm(p).c) < 0 ? -1 : 1;
  return C.rational(sign * n, d);
}

/** r when a = r·b for a constant r, otherwise null. */
function proportion(a: Poly, b: Poly): C.Coefficient | null {
  if (a.size !== b.size || a.size === 0) return a.size === 0 ? C.ZERO : null;
  let ratio: C.Coefficient | null = null;
  for (const [k, t] of a) {
    const u = b.get(k);
    if (!u) return null;
    const r = C.multiply(t.c, C.inverse(u.c));
    if (ratio === null) ratio = r;
    else if (C.key(ratio) !== C.key(r)) return null;
  }
  return ratio;
}
