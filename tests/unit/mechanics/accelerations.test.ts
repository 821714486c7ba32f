import { describe, expect, it } from "vitest";
import { sameExpression } from "@/lib/mechanics/canonical";
import { compileExpressions, compileMassMatrixSystem } from "@/lib/mechanics/compile";
import { deriveModel, type DerivationResult } from "@/lib/mechanics/derive";
import { dependsOn } from "@/lib/mechanics/differentiate";
import { formatExpression } from "@/lib/mechanics/expr/parse";
import type { SolvedAcceleration } from "@/lib/mechanics/accelerations";
import type { Model } from "@/lib/mechanics/model";
import { chainModel } from "@/lib/mechanics/templates/chain";
import { close, evaluate, mulberry32, uniform } from "./helpers/numeric";

const param = (name: string, unit = "1", value?: number) => ({ name, unit, ...(value === undefined ? {} : { value }) });
const coord = (name: string, unit = "rad") => ({ name, unit });

const pendulum: Model = {
  title: "Hook block on a single cable",
  coordinates: [coord("theta")],
  parameters: [param("m", "kg"), param("l", "m"), param("g", "m/s^2")],
  definitions: [
    { name: "x", expr: "l*sin(theta)" },
    { name: "y", expr: "-l*cos(theta)" },
  ],
  kinetic: "1/2*m*(x'^2 + y'^2)",
  potential: "m*g*y",
};

const atwood: Model = {
  title: "Hoist test: two masses over a pulley",
  coordinates: [coord("y", "m")],
  parameters: [param("m1", "kg"), param("m2", "kg"), param("J", "kg*m^2"), param("r", "m"), param("g", "m/s^2")],
  definitions: [{ name: "alpha", expr: "y/r" }],
  kinetic: "1/2*(m1 + m2)*y'^2 + 1/2*J*alpha'^2",
  potential: "-m1*g*y + m2*g*y",
};

const cartPole: Model = {
  title: "Trolley with a swinging load",
  coordinates: [coord("x", "m"), coord("phi")],
  parameters: [param("M", "kg"), param("m", "kg"), param("l", "m"), param("g", "m/s^2"), param("c", "N*s/m")],
  inputs: [{ name: "u", unit: "N" }],
  definitions: [
    { name: "px", expr: "x + l*sin(phi)" },
    { name: "py", expr: "-l*cos(phi)" },
  ],
  kinetic: "1/2*M*x'^2 + 1/2*m*(px'^2 + py'^2)",
  potential: "m*g*py",
  dissipation: "1/2*c*x'^2",
  forces: { x: "u" },
};

/** Three coordinates in two uncoupled groups: the swinging load {x, phi} and a hoist drum on a torsion spring {alpha}. */
const trolleyAndDrum: Model = {
  ...cartPole,
  title: "Trolley with a swinging load and a hoist drum",
  coordinates: [...cartPole.coordinates, coord("alpha")],
  parameters: [...cartPole.parameters, param("J", "kg*m^2"), param("kd", "N*m/rad")],
  kinetic: `${cartPole.kinetic} + 1/2*J*alpha'^2`,
  potential: `${cartPole.potential} + 1/2*kd*alpha^2`,
};

const radialSpring: Model = {
  title: "Swinging sensor on a spring arm",
  coordinates: [coord("r", "m"), coord("theta")],
  parameters: [param("m", "kg"), param("k", "N/m"), param("L", "m"), param("g", "m/s^2")],
  kinetic: "1/2*m*(r'^2 + r^2*theta'^2)",
  potential: "1/2*k*(sqrt(r^2 + L^2) - L)^2 - m*g*r*cos(theta)",
};

function solved(result: DerivationResult): SolvedAcceleration[] {
  if (!Array.isArray(result.accelerations)) throw new Error(`accelerations not available: ${result.accelerations.reason}`);
  return result.accelerations;
}

describe("solved accelerations", () => {
  it("match a numeric solve of M q'' = f at seeded random states", () => {
    const random = mulberry32(99);
    for (const model of [pendulum, atwood, cartPole, trolleyAndDrum, radialSpring, chainModel({ links: 2 })]) {
      const result = deriveModel(model);
      const names = result.coordinates;
      const inputs = (model.inputs ?? []).map((u) => u.name);
      const parameters: Record<string, number> = {};
      for (const p of model.parameters) parameters[p.name] = uniform(random, 0.5, 2);
      const system = compileMassMatrixSystem({ coordinates: names, massMatrix: result.massMatrix, forcing: result.forcing, inputs, parameters });
      const variables = [...names, ...names.map((q) => `${q}'`), "t", ...inputs];
      // The solved form and its display form, compiled side by side.
      const exprs = compileExpressions([...solved(result).map((a) => a.expr), ...solved(result).map((a) => a.display)], variables, { constants: parameters });
      const values = new Float64Array(variables.length);
      const ours = new Float64Array(2 * names.length);
      const reference = new Float64Array(names.length);
      for (let trial = 0; trial < 10; trial++) {
        const q = names.map((n) => (n === "r" || n === "x" || n === "y" ? uniform(random, 0.5, 2) : uniform(random, -3, 3)));
        const rates = names.map(() => uniform(random, -2, 2));
        const u = inputs.map(() => uniform(random, -1, 1));
        values.set([...q, ...rates, 0, ...u]);
        exprs.evaluate(values, ours);
        expect(system.accelerations(0, q, rates, u, reference)).toBe(true);
        for (let i = 0; i < names.length; i++) {
          expect(close(ours[i]!, reference[i]!, 1e-9), `${model.title}: ${names[i]}''`).toBe(true);
          expect(close(ours[names.length + i]!, reference[i]!, 1e-9), `${model.title}: ${names[i]}'' in display form`).toBe(true);
        }
      }
    }
  });

  it("simple pendulum: θ'' = −(g/l) sin θ", () => {
    // Any mechanics text (e.g. Taylor, Classical Mechanics, ch. 1–4); from memory.
    const [theta] = solved(deriveModel(pendulum));
    expect(theta!.coordinate).toBe("theta");
    expect(sameExpression(theta!.expr, "-(g/l)*sin(theta)")).toBe(true);
  });

  it("Atwood machine with a heavy pulley: a = g (m1 − m2)/(m1 + m2 + J/r²)", () => {
    const [y] = solved(deriveModel(atwood));
    // The solved form names no coordinate or rate: the acceleration is constant.
    expect(dependsOn(y!.expr, "y", 0) || dependsOn(y!.expr, "y", 1)).toBe(false);
    const random = mulberry32(12);
    for (let i = 0; i < 8; i++) {
      const env = { m1: uniform(random, 0.5, 3), m2: uniform(random, 0.5, 3), J: uniform(random, 0.01, 1), r: uniform(random, 0.05, 0.5), g: 9.81 };
      // Halliday, Resnick & Walker (introductory physics), from memory.
      const published = (env.g * (env.m1 - env.m2)) / (env.m1 + env.m2 + env.J / env.r ** 2);
      expect(close(evaluate(y!.expr, env), published, 1e-12), formatExpression(y!.expr)).toBe(true);
    }
  });

  it("writes a single-term determinant without a fraction bar over a sum", () => {
    const [theta] = solved(deriveModel(pendulum));
    expect(formatExpression(theta!.expr)).toBe("-g*sin(theta)/l");
  });

  it("solves any number of coordinates whose coupled groups are small", () => {
    const result = deriveModel(trolleyAndDrum);
    const [, , alpha] = solved(result);
    // The drum is a torsional oscillator of its own: α'' = −(kd/J) α (any vibrations text, e.g. Rao; from memory).
    expect(alpha!.coordinate).toBe("alpha");
    expect(sameExpression(alpha!.expr, "-kd*alpha/J")).toBe(true);
  });

  it("says why when the coupled group is too large or the mass matrix singular", () => {
    const three = deriveModel(chainModel({ links: 3 })).accelerations;
    expect(Array.isArray(three)).toBe(false);
    if (!Array.isArray(three))
      expect(three.reason).toBe(
        "all 3 coordinates are coupled through the mass matrix (a 3×3 block); accelerations are solved symbolically only for blocks up to 2×2",
      );
    const singular = deriveModel({
      title: "Two carts on one rail, one coordinate too many",
      coordinates: [coord("a", "m"), coord("b", "m")],
      parameters: [param("m", "kg")],
      kinetic: "1/2*m*(a' + b')^2",
      potential: "0",
    }).accelerations;
    expect(singular).toEqual({ available: false, reason: "the mass matrix is singular" });
  });
});
