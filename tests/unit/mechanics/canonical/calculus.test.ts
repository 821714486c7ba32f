import { describe, expect, it } from "vitest";
import nerdamer from "nerdamer";
import "nerdamer/Calculus.js";
import { canonicalize } from "@/lib/mechanics/canonical";
import { partialDerivative, timeDerivative } from "@/lib/mechanics/canonical/calculus";
import { close, evaluate, mulberry32, uniform, type Env } from "../helpers/numeric";

const coordinates = ["a", "b", "x"];

/** Random expressions in and outside the trigonometric class, with rates and explicit t. */
function randomExpression(random: () => number, depth: number): string {
  const pick = <T>(xs: T[]): T => xs[Math.floor(random() * xs.length)]!;
  if (depth === 0 || random() < 0.2) {
    return pick(["a", "b", "x", "a'", "b'", "x'", "m", "k", "t", "3", "sin(a - b)", "cos(2*a)", "sin(w*t)", "x^2"]);
  }
  const e = () => randomExpression(random, depth - 1);
  switch (Math.floor(random() * 9)) {
    case 0:
      return `(${e()} + ${e()})`;
    case 1:
      return `${e()}*${e()}`;
    case 2:
      return `(${e()})^2`;
    case 3:
      return `${pick(["sin", "cos"])}(${pick(["a", "a - b", "2*b + x", "w*t - a"])})*${e()}`;
    case 4:
      return `sqrt(k + (${e()})^2)`;
    case 5:
      return `${e()}/(m + x^2)`;
    case 6:
      return `exp(${e()}/4)`;
    case 7:
      return `atan(${e()})`;
    default:
      return `log(2 + cos(${e()}))`;
  }
}

function randomEnv(random: () => number): Env {
  const env: Env = { t: uniform(random, 0, 1) };
  for (const q of coordinates) {
    env[q] = uniform(random, -1, 1);
    env[`${q}'`] = uniform(random, -1, 1);
    env[`${q}''`] = uniform(random, -1, 1);
  }
  for (const p of ["m", "k", "w"]) env[p] = uniform(random, 0.5, 1.5);
  return env;
}

/** Central difference with step h. */
function centralDifference(f: (s: number) => number, h = 1e-5): number {
  return (f(h) - f(-h)) / (2 * h);
}

describe("derivatives on the canonical form", () => {
  it("match finite differences for ∂/∂q, ∂/∂q' and d/dt (seeded random expressions)", () => {
    const random = mulberry32(424242);
    let checked = 0;
    for (let trial = 0; trial < 120; trial++) {
      const text = randomExpression(random, 3);
      const c = canonicalize([text], { coordinates });
      const poly = c.polys[0]!;
      const env = randomEnv(random);
      const f = (shift: Env) => evaluate(text, { ...env, ...shift });
      if (!Number.isFinite(f({}))) continue;
      for (const q of ["a", "x"]) {
        const dq = c.format(partialDerivative(c.algebra, c.space.coordinates[coordinates.indexOf(q)]!).apply(poly));
        const fd = centralDifference((h) => f({ [q]: env[q]! + h }));
        expect(close(evaluate(dq, env), fd, 1e-6), `∂/∂${q} of ${text}: ${dq}`).toBe(true);
        const dv = c.format(partialDerivative(c.algebra, c.space.rates[coordinates.indexOf(q)]!).apply(poly));
        const fdv = centralDifference((h) => f({ [`${q}'`]: env[`${q}'`]! + h }));
        expect(close(evaluate(dv, env), fdv, 1e-6), `∂/∂${q}' of ${text}: ${dv}`).toBe(true);
      }
      // d/dt along q(t) = q + q'·s + q''·s²/2 (so q'(s) = q' + q''·s), with explicit t moving too.
      const dt = c.format(timeDerivative(c.algebra).apply(poly));
      const along = (s: number) => {
        const shifted: Env = { t: env.t! + s };
        for (const q of coordinates) {
          shifted[q] = env[q]! + env[`${q}'`]! * s + (env[`${q}''`]! * s * s) / 2;
          shifted[`${q}'`] = env[`${q}'`]! + env[`${q}''`]! * s;
        }
        return f(shifted);
      };
      expect(close(evaluate(dt, env), centralDifference(along), 1e-6), `d/dt of ${text}: ${dt}`).toBe(true);
      checked++;
    }
    expect(checked).toBeGreaterThan(100);
  });

  it("agree with nerdamer's differentiation on expressions outside the class", () => {
    // nerdamer is a general-purpose CAS, used here as an independent check. Its 1.1.13
    // release misprints products with a sqrt factor (sqrt(u)*exp(a) differentiates to
    // …*sqrt(u^(1/2))), so only single-factor forms are compared with it.
    const cases = ["1/sqrt(k + a^2)", "log(2 + cos(a))*a^3", "atan(a*k)", "exp(a^2/2)", "a/(m + a^2)", "tanh(a)^2"];
    const random = mulberry32(11);
    for (const text of cases) {
      const c = canonicalize([text], { coordinates });
      const ours = c.format(partialDerivative(c.algebra, c.space.coordinates[0]!).apply(c.polys[0]!));
      const theirs = nerdamer.diff(nerdamer(text), "a");
      // Three decimals: nerdamer turns long decimals into approximate fractions.
      const a = Number(uniform(random, 0.1, 0.9).toFixed(3));
      const k = Number(uniform(random, 0.5, 1.5).toFixed(3));
      const m = Number(uniform(random, 0.5, 1.5).toFixed(3));
      const reference = Number(
        nerdamer(theirs.toString(), { a: String(a), k: String(k), m: String(m) })
          .evaluate()
          .text("decimals"),
      );
      expect(close(evaluate(ours, { a, k, m }), reference, 1e-9), `${text}: ${ours} vs ${theirs.toString()}`).toBe(true);
    }
  });

  it("keeps fractional exponents exact", () => {
    const c = canonicalize(["x^(1/3)"], { coordinates: ["x"] });
    expect(c.format(partialDerivative(c.algebra, c.space.coordinates[0]!).apply(c.polys[0]!))).toBe("1/(3*x^(2/3))");
  });

  it("differentiates time phases with their known rate", () => {
    const c = canonicalize(["a*sin(w*t)"], { coordinates: ["x"] });
    const dt = timeDerivative(c.algebra).apply(c.polys[0]!);
    expect(c.format(dt)).toBe("a*w*cos(w*t)");
  });
});
