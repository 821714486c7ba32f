import * as C from "./coefficient";
import type { Algebra } from "./algebra";
import { generalPartial } from "./general";
import { makeTerm, type Poly, type Term } from "./term";

/**
 * The derivative of one plain symbol under a derivation rule (∂/∂x or d/dt),
 * or null when it is zero. Atoms are handled by the chain rule in `Derivation`.
 */
export type SymbolRule = (id: number) => Poly | null;

/** Raised when d/dt meets a symbol whose rate the engine does not know (an input, a q''). */
export class RateUnavailableError extends Error {
  constructor(
    readonly symbolId: number,
    /** What has no rate, e.g. `the input u`. */
    readonly what: string,
  ) {
    super(`the rate of ${what} is not available`);
    this.name = "RateUnavailableError";
  }
}

/**
 * A derivation (a linear map obeying the product rule) on canonical sums,
 * working term by term: Σ_j e_j·x_j^(e_j−1)·D(x_j)·rest + D(sin/cos)·rest.
 * It never leaves the canonical form, which is what keeps Euler–Lagrange fast.
 */
export class Derivation {
  private readonly cache = new Map<number, Poly | null>();
  private readonly angleCache = new Map<string, Poly | null>();

  constructor(
    private readonly alg: Algebra,
    private readonly rule: SymbolRule,
    /** Plain symbols the rule is non-zero on; atoms depending on none of them are constant. */
    private readonly active: (id: number) => boolean,
    /** For ∂/∂x: x. Atom derivatives are then offered to nerdamer (checked against the chain rule). */
    private readonly variable?: number,
  ) {}

  /** D(symbol) including atoms by the chain rule. */
  ofSymbol(id: number): Poly | null {
    if (this.cache.has(id)) return this.cache.get(id)!;
    const entry = this.alg.space.entry(id);
    let result: Poly | null;
    if (entry.kind === "function" || entry.kind === "power") {
      let relevant = false;
      for (const d of entry.dependsOn) if (this.active(d)) relevant = true;
      if (!relevant) result = null;
      else if (entry.kind === "power") {
        const inner = this.apply(entry.base!);
        result = inner.size === 0 ? null : inner;
      } else {
        const inner = this.apply(entry.arg!);
        result = inner.size === 0 ? null : this.alg.mul(outerDerivative(this.alg, entry.fn!, entry.arg!), inner);
      }
      if (this.variable !== undefined && result !== null) result = atomPartial(this.alg, id, this.variable, result);
    } else result = this.rule(id);
    if (result !== null && result.size === 0) result = null;
    this.cache.set(id, result);
    return result;
  }

  private ofAngle(combo: readonly number[], key: string): Poly | null {
    if (this.angleCache.has(key)) return this.angleCache.get(key)!;
    const out: Poly = this.alg.zero();
    for (let i = 0; i < combo.length; i += 2) {
      const d = this.ofSymbol(combo[i]!);
      if (d) this.alg.addInto(out, d, C.fromFraction(combo[i + 1]!));
    }
    const result = out.size === 0 ? null : out;
    this.angleCache.set(key, result);
    return result;
  }

  apply(p: Poly): Poly {
    const out: Poly = this.alg.zero();
    for (const t of p.values()) this.termInto(out, t);
    return out;
  }

  private termInto(out: Poly, t: Term): void {
    const f = t.f;
    for (let i = 0; i < f.length; i += 2) {
      const d = this.ofSymbol(f[i]!);
      if (d === null) continue;
      const e = f[i + 1]!;
      const reduced = f.slice();
      if (e === 1) reduced.splice(i, 2);
      else reduced[i + 1] = e - 1;
      const head = makeTerm(C.multiply(t.c, C.fromFraction(e)), reduced, t.g);
      for (const u of d.values()) this.alg.mulTermsInto(out, head, u);
    }
    if (t.g !== null) {
      const d = this.ofAngle(t.g.combo, t.g.key);
      if (d === null) return;
      // d sin u = cos u · du,   d cos u = −sin u · du  (the combination keeps its canonical sign)
      const swapped = { sin: !t.g.sin, combo: t.g.combo, key: `${t.g.sin ? "c" : "s"}${t.g.combo.join(",")}` };
      const head = makeTerm(t.g.sin ? t.c : C.negate(t.c), f, swapped);
      for (const u of d.values()) this.alg.mulTermsInto(out, head, u);
    }
  }
}

/** F'(u) for the whitelisted functions, as a canonical sum. */
function outerDerivative(alg: Algebra, fn: string, u: Poly): Poly {
  const one = alg.constant(C.ONE);
  switch (fn) {
    case "sin":
      return alg.call("cos", u);
    case "cos":
      return alg.negate(alg.call("sin", u));
    case "tan":
      return alg.add(one, alg.powInt(alg.call("tan", u), 2));
    case "exp":
      return alg.call("exp", u);
    case "log":
      return alg.power(u, -1);
    case "abs":
      return alg.mul(u, alg.power(alg.call("abs", u), -1));
    case "sinh":
      return alg.call("cosh", u);
    case "cosh":
      return alg.call("sinh", u);
    case "tanh":
      return alg.sub(one, alg.powInt(alg.call("tanh", u), 2));
    case "asin":
      return alg.power(alg.sub(one, alg.powInt(u, 2)), -0.5);
    case "acos":
      return alg.negate(alg.power(alg.sub(one, alg.powInt(u, 2)), -0.5));
    case "atan":
      return alg.power(alg.add(one, alg.powInt(u, 2)), -1);
    default:
      throw new Error(`no derivative rule for ${fn}`);
  }
}

/** ∂/∂x for a plain symbol x (a coordinate, a rate, an acceleration). */
export function partialDerivative(alg: Algebra, x: number): Derivation {
  const one = alg.constant(C.ONE);
  return new Derivation(
    alg,
    (id) => (id === x ? one : null),
    (id) => id === x,
    x,
  );
}

/** Partial derivatives of atoms, per symbol table, so nerdamer sees each (atom, x) once per derivation. */
const atomPartials = new WeakMap<object, Map<string, Poly | null>>();

/** ∂(atom)/∂x: nerdamer's where it is verified (see general.ts), else the chain rule's `engine`. */
function atomPartial(alg: Algebra, atom: number, x: number, engine: Poly | null): Poly | null {
  let memo = atomPartials.get(alg.space);
  if (memo === undefined) atomPartials.set(alg.space, (memo = new Map()));
  const key = `${atom}:${x}`;
  if (memo.has(key)) return memo.get(key)!;
  const result = generalPartial(alg, atom, x, engine);
  memo.set(key, result);
  return result;
}

/**
 * d/dt by the chain rule: q → q', q' → q'', t → 1, ω·t → ω, parameters → 0.
 * Inputs and accelerations have no known rate; meeting one throws.
 */
export function timeDerivative(alg: Algebra): Derivation {
  const space = alg.space;
  const one = alg.constant(C.ONE);
  return new Derivation(
    alg,
    (id) => {
      const entry = space.entry(id);
      switch (entry.kind) {
        case "coordinate":
          return alg.symbol(space.rates[entry.coordinate]!);
        case "rate":
          return alg.symbol(space.accelerations[entry.coordinate]!);
        case "time":
          return one;
        case "phase":
          return alg.fromTerm(entry.phase!);
        case "acceleration":
          throw new RateUnavailableError(id, `the acceleration ${entry.name}''`);
        case "input":
          throw new RateUnavailableError(id, `the input ${entry.name}`);
        default:
          return null;
      }
    },
    (id) => {
      const kind = space.kind(id);
      return kind === "coordinate" || kind === "rate" || kind === "acceleration" || kind === "time" || kind === "input" || kind === "phase";
    },
  );
}
