import { readdirSync, readFileSync } from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { demoDerivations } from "@/db/seed/demo";
import { canonicalize, sameExpression } from "@/lib/mechanics/canonical";
import { displayExpr } from "@/lib/mechanics/canonical/display";
import { deriveModel, type DerivationResult } from "@/lib/mechanics/derive";
import type { Expr } from "@/lib/mechanics/expr/ast";
import { formatExpression as text } from "@/lib/mechanics/expr/parse";
import type { Model } from "@/lib/mechanics/model";
import { chainModel } from "@/lib/mechanics/templates/chain";
import { topLevelTerms } from "@/lib/mechanics/terms";
import { validateModel } from "@/lib/mechanics/validate-model";
import { documentToModel, type DerivationDocument } from "@/lib/notebook/document";
import { close, evaluate, mulberry32, uniform, type Env } from "../helpers/numeric";

const examplesDir = path.join(import.meta.dirname, "../../../../examples");
const examples: [string, Model][] = readdirSync(examplesDir)
  .filter((f) => f.endsWith(".model.json"))
  .map((f) => [f, validateModel(JSON.parse(readFileSync(path.join(examplesDir, f), "utf8")))]);
const demos: [string, Model][] = demoDerivations.map((d) => [
  d.title,
  validateModel("cells" in d.content ? documentToModel(d.content as unknown as DerivationDocument) : d.content),
]);
const models: [string, Model][] = [
  ["double pendulum (2-link chain)", chainModel({ links: 2 })],
  ["3-link chain", chainModel({ links: 3 })],
  ...examples,
  ...demos,
];

/** Every expression the notebook shows, canonical beside display. */
function shown(result: DerivationResult): { what: string; canonical: Expr; display: Expr }[] {
  const out = [
    ...result.equations.map((e) => ({ what: `equation of ${e.coordinate}`, canonical: e.residual, display: e.display })),
    ...result.massMatrix.flatMap((row, i) => row.map((m, j) => ({ what: `M[${i}][${j}]`, canonical: m, display: result.display.massMatrix[i]![j]! }))),
    ...result.forcing.map((f, i) => ({ what: `f[${i}]`, canonical: f, display: result.display.forcing[i]! })),
    { what: "energy function", canonical: result.energy, display: result.display.energy },
    ...result.conserved.map((c) => ({ what: c.name, canonical: c.expr, display: c.display })),
  ];
  if (Array.isArray(result.accelerations)) out.push(...result.accelerations.map((a) => ({ what: `${a.coordinate}''`, canonical: a.expr, display: a.display })));
  return out;
}

/** Random values for every symbol: angles anywhere, lengths, masses and rates away from zero. */
function randomEnv(model: Model, random: () => number): Env {
  const env: Env = { t: uniform(random, 0, 3) };
  for (const c of model.coordinates) {
    env[c.name] = uniform(random, c.unit === "rad" ? -3 : 0.5, c.unit === "rad" ? 3 : 2);
    env[`${c.name}'`] = uniform(random, -2, 2);
    env[`${c.name}''`] = uniform(random, -2, 2);
  }
  for (const p of [...model.parameters, ...(model.inputs ?? [])]) env[p.name] = uniform(random, 0.5, 2);
  // A constrained model's equations hold its multipliers as symbols (lambda_<name>, mu_<name>).
  for (const c of model.constraints ?? []) env[`lambda_${c.name}`] = uniform(random, -2, 2);
  for (const c of model.rateConstraints ?? []) env[`mu_${c.name}`] = uniform(random, -2, 2);
  return env;
}

/** a/b and c/d (either may be a plain sum) are equal when a·d − c·b is zero canonically. */
function sameQuotient(x: Expr, y: Expr, coordinates: string[]): boolean {
  const split = (e: Expr): [string, string] => (e.kind === "bin" && e.op === "/" ? [text(e.left), text(e.right)] : [text(e), "1"]);
  const [a, b] = split(x);
  const [c, d] = split(y);
  return sameExpression(`(${a})*(${d})`, `(${c})*(${b})`, { coordinates });
}

describe("display form", () => {
  it.each(models)("is equal to the canonical form: %s (canonical difference and seeded random points)", (_, model) => {
    const result = deriveModel(model);
    const coordinates = model.coordinates.map((c) => c.name);
    const random = mulberry32(4242);
    const envs = Array.from({ length: 25 }, () => randomEnv(model, random));
    for (const { what, canonical, display } of shown(result)) {
      // Canonical equality: the display tree brought back to canonical form is the same sum.
      expect(sameQuotient(display, canonical, coordinates), `${model.title}, ${what}: ${text(display)}`).toBe(true);
      for (const env of envs) expect(close(evaluate(display, env), evaluate(canonical, env), 1e-9), `${model.title}, ${what} at a random point`).toBe(true);
    }
  });

  it("collects the double pendulum by accelerations with factored coefficients", () => {
    const result = deriveModel(chainModel({ links: 2 }));
    const terms = topLevelTerms(result.equations[0]!.display).map(({ sign, term }) => `${sign < 0 ? "-" : ""}${text(term)}`);
    // J. R. Taylor, Classical Mechanics (2005), ch. 11 (from memory), times l1:
    // (m1+m2) l1² θ1'' + m2 l1 l2 cos(θ1−θ2) θ2'' + m2 l1 l2 sin(θ1−θ2) θ2'² + (m1+m2) g l1 sin θ1 = 0.
    expect(terms).toEqual([
      "(m1 + m2)*l1^2*theta1''",
      "m2*l1*l2*cos(theta1 - theta2)*theta2''",
      "m2*l1*l2*sin(theta1 - theta2)*theta2'^2",
      "(m1 + m2)*l1*g*sin(theta1)",
    ]);
    // The canonical form keeps one term per mass: six terms against four.
    expect(topLevelTerms(result.equations[0]!.residual)).toHaveLength(6);
    expect(text(result.display.massMatrix[0]![0]!)).toBe("(m1 + m2)*l1^2");
  });

  it("shows the demo gimbal's sin² where the canonical form has the double angle", () => {
    const [, gimbal] = demos.find(([title]) => title.startsWith("Camera gimbal"))!;
    expect(gimbal.kinetic).toContain("sin(theta)^2");
    const result = deriveModel(gimbal);
    // The canonical kernel writes sin²θ = (1 − cos 2θ)/2.
    expect(text(result.massMatrix[0]![0]!)).toContain("cos(2*theta)");
    expect(text(result.display.massMatrix[0]![0]!)).toBe("J_y + I_2*sin(theta)^2 + I_3*cos(theta)^2");
    expect(text(result.equations[0]!.display)).toMatch(/^\(J_y \+ I_2\*sin\(theta\)\^2 \+ I_3\*cos\(theta\)\^2\)\*psi'' /);
    // ∂/∂θ of sin²θ comes back as 2 sin θ cos θ, not sin 2θ.
    expect(text(result.equations[1]!.display)).toContain("(I_2 - I_3)*sin(theta)*cos(theta)*psi'^2");
    expect(text(result.equations[1]!.display)).not.toContain("2*theta");
  });

  it("restores products of sines and cosines and factors shared symbols", () => {
    const cases: [string, string][] = [
      ["sin(a)*sin(b)*k", "k*sin(a)*sin(b)"],
      ["cos(x)^2*m + sin(x)^2*J", "J*sin(x)^2 + m*cos(x)^2"],
      ["m1*l1^2 + m2*l1^2 + m2*l2^2", "(m1 + m2)*l1^2 + m2*l2^2"],
      ["(1 - cos(q))*m*g*l", "(1 - cos(q))*m*g*l"],
    ];
    for (const [input, expected] of cases) {
      // Parameters in the order a model would declare them (it sets the order of factors).
      const c = canonicalize([input], { coordinates: ["a", "b", "x", "q"], constants: ["k", "m", "J", "m1", "m2", "l1", "l2", "g", "l"] });
      const display = displayExpr(c.algebra, c.polys[0]!);
      expect(sameExpression(display, input, { coordinates: ["a", "b", "x", "q"] })).toBe(true);
      expect(sameExpression(text(display), expected, { coordinates: ["a", "b", "x", "q"] })).toBe(true);
      expect(text(display), input).toBe(expected);
    }
  });

  it("writes the trolley's accelerations as one fraction over M + m sin²θ", () => {
    const [, crane] = demos.find(([title]) => title.startsWith("Gantry crane: trolley"))!;
    const result = deriveModel(crane);
    if (!Array.isArray(result.accelerations)) throw new Error(result.accelerations.reason);
    // Cart with a hanging pendulum (θ from the downward vertical), viscous drag b on the cart:
    // x'' = (F − b x' + m l θ'² sin θ + m g sin θ cos θ)/(M + m sin²θ) — the standard gantry-crane
    // model, as in R. V. Florian (2007) with θ measured from below; from memory.
    expect(text(result.accelerations[0]!.display)).toBe("(-b*x' + m*l*sin(theta)*theta'^2 + m*g*sin(theta)*cos(theta) + F)/(M + m*sin(theta)^2)");
    expect(
      sameExpression(result.accelerations[0]!.display, "(F - b*x' + m*l*theta'^2*sin(theta) + m*g*sin(theta)*cos(theta))/(M + m*sin(theta)^2)", {
        coordinates: ["x", "theta"],
      }),
    ).toBe(true);
  });
});
