import { describe, expect, it } from "vitest";
import { canonicalText, canonicalize, sameExpression } from "@/lib/mechanics/canonical";
import { close, evaluate, mulberry32, uniform, type Env } from "../helpers/numeric";

const angles = ["a", "b", "c"];

/** A random expression in the trigonometric-polynomial class over a, b, c, rates and constants m, k. */
function randomTrigPolynomial(random: () => number, depth: number): string {
  const pick = <T>(xs: T[]): T => xs[Math.floor(random() * xs.length)]!;
  if (depth === 0 || random() < 0.25) {
    return pick(["a", "b", "c", "a'", "b'", "m", "k", "2", "1/3", "0.5", "sin(a)", "cos(b)", "sin(a - 2*b)", "cos(a + b - c)"]);
  }
  const x = () => randomTrigPolynomial(random, depth - 1);
  switch (Math.floor(random() * 6)) {
    case 0:
      return `(${x()} + ${x()})`;
    case 1:
      return `(${x()} - ${x()})`;
    case 2:
      return `${x()}*${x()}`;
    case 3:
      return `(${x()})^2`;
    case 4: {
      const combo = `${Math.floor(random() * 3) - 1}*a + ${Math.floor(random() * 3) - 1}*b + ${pick(["0", "c", "-c", "pi/2", "pi"])}`;
      return `${pick(["sin", "cos"])}(${combo})*${x()}`;
    }
    default:
      return `${x()}/${pick(["m", "k", "2", "(m*k)"])}`;
  }
}

/** Random values for every symbol the generators use. */
function randomEnv(random: () => number): Env {
  const env: Env = { t: uniform(random, 0, 2) };
  for (const q of [...angles, "x", "r"]) {
    env[q] = uniform(random, -2, 2);
    env[`${q}'`] = uniform(random, -2, 2);
    env[`${q}''`] = uniform(random, -2, 2);
  }
  env.r = uniform(random, 0.5, 2);
  for (const p of ["m", "k", "w", "l", "g"]) env[p] = uniform(random, 0.5, 2);
  return env;
}

describe("canonical trigonometric form", () => {
  it("removes sin²+cos² and combines products by the product-to-sum rules", () => {
    // Pythagorean and angle-difference identities: a fact of the trade.
    expect(canonicalText("sin(a)^2 + cos(a)^2")).toBe("1");
    expect(canonicalText("cos(a)*cos(b) + sin(a)*sin(b)")).toBe("cos(a - b)");
    expect(canonicalText("sin(a)*cos(b) - cos(a)*sin(b)")).toBe("sin(a - b)");
    expect(canonicalText("2*sin(a)*cos(a)")).toBe("sin(2*a)");
    expect(sameExpression("2*sin(0.1*a)*cos(0.2*a)", "sin(0.3*a) - sin(0.1*a)")).toBe(true);
  });

  it("uses one sign convention for even and odd functions of a difference", () => {
    expect(canonicalText("cos(b - a)", { coordinates: ["a", "b"] })).toBe("cos(a - b)");
    expect(canonicalText("sin(b - a)", { coordinates: ["a", "b"] })).toBe("-sin(a - b)");
    expect(canonicalText("sin(-a)")).toBe("-sin(a)");
    expect(sameExpression("sin(b - a) + sin(a - b)", "0", { coordinates: ["a", "b"] })).toBe(true);
  });

  it("reduces shifts by multiples of pi/2", () => {
    expect(canonicalText("cos(a + pi/2)")).toBe("-sin(a)");
    expect(canonicalText("sin(a + pi)")).toBe("-sin(a)");
    expect(canonicalText("sin(pi/2 - a)")).toBe("cos(a)");
  });

  it("keeps rational coefficients exact and writes them compactly", () => {
    expect(canonicalText("1/2*m*x'^2", { coordinates: ["x"] })).toBe("m*x'^2/2");
    expect(canonicalText("0.1 + 0.2 - 0.3")).toBe("0");
    expect(canonicalText("k/r^2", { coordinates: ["r"] })).toBe("k/r^2");
    expect(sameExpression("1/(2*m + 2*k)", "1/(m + k)/2")).toBe(true);
  });

  it("treats constant-rate time phases as angles", () => {
    expect(canonicalText("sin(w*t)^2 + cos(w*t)^2")).toBe("1");
    expect(canonicalText("sin(w*t)*cos(a) - cos(w*t)*sin(a)", { coordinates: ["a"] })).toBe("-sin(a - w*t)");
  });

  it("is idempotent and keeps the value (seeded random expressions)", () => {
    const random = mulberry32(20260101);
    for (let trial = 0; trial < 150; trial++) {
      const text = randomTrigPolynomial(random, 3);
      const once = canonicalText(text, { coordinates: angles });
      expect(canonicalText(once, { coordinates: angles }), text).toBe(once);
      const env = randomEnv(random);
      expect(close(evaluate(once, env), evaluate(text, env), 1e-9), `${text} → ${once}`).toBe(true);
    }
  });

  it("gives equal expressions equal forms (seeded random trigonometric identities)", () => {
    const random = mulberry32(7);
    const rewrites: ((u: string, v: string) => [string, string])[] = [
      // cos(u+v) = cos u cos v − sin u sin v;  sin(u+v) = sin u cos v + cos u sin v
      (u, v) => [`cos(${u} + ${v})`, `cos(${u})*cos(${v}) - sin(${u})*sin(${v})`],
      (u, v) => [`sin(${u} + ${v})`, `sin(${u})*cos(${v}) + cos(${u})*sin(${v})`],
      // double angle and power reduction
      (u) => [`cos(2*(${u}))`, `1 - 2*sin(${u})^2`],
      (u) => [`sin(${u})^2`, `(1 - cos(2*(${u})))/2`],
      (u) => [`sin(${u})^3`, `(3*sin(${u}) - sin(3*(${u})))/4`],
      (u, v) => [`sin(${u})*sin(${v})`, `(cos(${u} - (${v})) - cos(${u} + ${v}))/2`],
    ];
    const combo = () => `${Math.floor(random() * 5) - 2}*a + ${Math.floor(random() * 5) - 2}*b + ${Math.floor(random() * 3) - 1}*c`;
    for (let trial = 0; trial < 200; trial++) {
      const rewrite = rewrites[Math.floor(random() * rewrites.length)]!;
      const [left, right] = rewrite(combo(), combo());
      const factor = randomTrigPolynomial(random, 1);
      const a = `${factor}*(${left}) + m`;
      const b = `m + (${right})*${factor}`;
      const c = canonicalize([a, b], { coordinates: angles });
      expect(c.format(c.polys[0]!), `${a} vs ${b}`).toBe(c.format(c.polys[1]!));
    }
  });

  it("carries expressions outside the class as atoms with canonical arguments", () => {
    const r = ["r"];
    expect(sameExpression("sqrt(x^2 + r^2)*sqrt(r^2 + x^2)", "x^2 + r^2", { coordinates: ["x", "r"] })).toBe(true);
    expect(canonicalText("exp(a)*exp(a)/exp(a)")).toBe("exp(a)");
    expect(canonicalText("(m + k)/(k + m)")).toBe("1");
    // Atom bases carry integer coefficients without a common factor.
    expect(canonicalText("1/(2 + x)", { coordinates: ["x"] })).toBe("1/(x + 2)");
    expect(canonicalText("3/(4*x + 2)", { coordinates: ["x"] })).toBe("3/(2*(2*x + 1))");
    const text = canonicalText("k/sqrt(r^2 + l^2) + log(2 + cos(r))", { coordinates: r });
    const random = mulberry32(3);
    const env = randomEnv(random);
    expect(close(evaluate(text, env), evaluate("k/sqrt(r^2 + l^2) + log(2 + cos(r))", env))).toBe(true);
  });
});
