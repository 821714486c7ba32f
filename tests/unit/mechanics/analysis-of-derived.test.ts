/**
 * The numeric side of the engine on what the symbolic side derives: the
 * double pendulum written with Cartesian definitions, derived by deriveModel,
 * then checked for units, rendered, linearized and searched for equilibria.
 */
import katex from "katex";
import { describe, expect, it } from "vitest";
import { deriveModel } from "@/lib/mechanics/derive";
import { findEquilibria } from "@/lib/mechanics/equilibria";
import { toLatexTerms } from "@/lib/mechanics/latex";
import { linearizeAbout } from "@/lib/mechanics/linearize";
import type { Model } from "@/lib/mechanics/model";
import { topLevelTerms } from "@/lib/mechanics/terms";
import { checkModelUnits } from "@/lib/mechanics/units";

const l = 0.9;
const g = 9.81;
const model: Model = {
  title: "Hoist hook with a swinging block (double pendulum)",
  coordinates: [
    { name: "theta1", unit: "rad" },
    { name: "theta2", unit: "rad" },
  ],
  parameters: [
    { name: "m1", unit: "kg", value: 3 },
    { name: "m2", unit: "kg", value: 3 },
    { name: "l1", unit: "m", value: l },
    { name: "l2", unit: "m", value: l },
    { name: "g", unit: "m/s^2", value: g },
  ],
  definitions: [
    { name: "x1", expr: "l1*sin(theta1)" },
    { name: "y1", expr: "-l1*cos(theta1)" },
    { name: "x2", expr: "x1 + l2*sin(theta2)" },
    { name: "y2", expr: "y1 - l2*cos(theta2)" },
  ],
  kinetic: "1/2*m1*(x1'^2 + y1'^2) + 1/2*m2*(x2'^2 + y2'^2)",
  potential: "m1*g*y1 + m2*g*y2",
};

describe("analysis of a derived double pendulum", () => {
  const derived = deriveModel(model);
  const system = {
    coordinates: derived.coordinates,
    coordinateUnits: ["rad", "rad"],
    massMatrix: derived.massMatrix,
    forcing: derived.forcing,
    parameters: Object.fromEntries(model.parameters.map((p) => [p.name, p.value!])),
  };

  it("passes the unit check term by term", () => {
    expect(() => checkModelUnits(model, derived.equations)).not.toThrow();
  });

  it("renders every residual with KaTeX, one \\htmlData per term of its display form", () => {
    for (const equation of derived.equations) {
      const { latex, terms } = toLatexTerms(equation.display);
      expect(terms).toHaveLength(topLevelTerms(equation.display).length);
      const html = katex.renderToString(latex, {
        throwOnError: true,
        trust: (c) => c.command === "\\htmlData",
        strict: (code: string) => (code === "htmlExtension" ? "ignore" : "error"),
      });
      expect(html.match(/data-term=/g)).toHaveLength(terms.length);
    }
  });

  it("has small-oscillation frequencies ω² = (2 ± √2) g/l", () => {
    const lin = linearizeAbout(system, { q: [0, 0] });
    // Taylor, Classical Mechanics (2005), ch. 11 (from memory; REFERENCES.md).
    expect(lin.modes.map((m) => m.omegaSquared)).toEqual([expect.closeTo(((2 - Math.SQRT2) * g) / l, 10), expect.closeTo(((2 + Math.SQRT2) * g) / l, 10)]);
  });

  it("has one stable equilibrium among four", () => {
    const equilibria = findEquilibria(system);
    // Fact of the trade: each link hangs straight down or stands straight up; only down–down is stable.
    expect(equilibria.map((e) => e.stability).sort()).toEqual(["stable", "unstable", "unstable", "unstable"]);
  });
});
