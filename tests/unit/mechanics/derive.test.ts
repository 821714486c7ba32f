import { readFileSync } from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { EigenvalueDecomposition, Matrix } from "ml-matrix";
import { canonicalize, sameExpression } from "@/lib/mechanics/canonical";
import { timeDerivative } from "@/lib/mechanics/canonical/calculus";
import { MINUS_ONE } from "@/lib/mechanics/canonical/coefficient";
import { deriveModel, type DerivationResult } from "@/lib/mechanics/derive";
import { ModelError } from "@/lib/mechanics/errors";
import { formatExpression as text } from "@/lib/mechanics/expr/parse";
import { topLevelTerms } from "@/lib/mechanics/terms";
import type { Model } from "@/lib/mechanics/model";
import { chainModel } from "@/lib/mechanics/templates/chain";
import { validateModel } from "@/lib/mechanics/validate-model";
import { close, evaluate, mulberry32, uniform, type Env } from "./helpers/numeric";

const param = (name: string, unit = "1", value?: number) => ({ name, unit, ...(value === undefined ? {} : { value }) });
const coord = (name: string, unit = "rad") => ({ name, unit });

function example(name: string): Model {
  return validateModel(JSON.parse(readFileSync(path.join(import.meta.dirname, "../../../examples", name), "utf8")));
}

/** Random state: coordinates, rates, accelerations, t, positive parameter and input values, momenta. */
function randomEnv(model: Model, random: () => number): Env {
  const env: Env = { t: uniform(random, 0, 3) };
  for (const c of model.coordinates) {
    env[c.name] = uniform(random, c.unit === "rad" ? -3 : 0.5, c.unit === "rad" ? 3 : 2);
    env[`${c.name}'`] = uniform(random, -2, 2);
    env[`${c.name}''`] = uniform(random, -2, 2);
    env[`p_${c.name}`] = uniform(random, -2, 2);
  }
  for (const p of [...model.parameters, ...(model.inputs ?? [])]) env[p.name] = uniform(random, 0.5, 2);
  return env;
}

const coordinatesOf = (model: Model) => model.coordinates.map((c) => c.name);

const models: [string, () => Model][] = [
  ["3-link chain", () => chainModel({ links: 3 })],
  ["gantry crane trolley", () => example("gantry-crane-trolley.model.json")],
  ["gimbal", () => example("gimbal.model.json")],
  ["seat suspension", () => example("seat-suspension.model.json")],
  ["double pendulum", () => example("double-pendulum.model.json")],
];

describe("deriveModel: published equations of motion", () => {
  it("double pendulum from Cartesian definitions has the textbook form and term counts", () => {
    const model = chainModel({ links: 2 });
    const result = deriveModel(model);
    const q = { coordinates: coordinatesOf(model) };
    // J. R. Taylor, Classical Mechanics (2005), ch. 11 (from memory), times l1 and m2*l2 respectively:
    // (m1+m2) l1 θ1'' + m2 l2 θ2'' cos(θ1−θ2) + m2 l2 θ2'² sin(θ1−θ2) + (m1+m2) g sin θ1 = 0
    // l2 θ2'' + l1 θ1'' cos(θ1−θ2) − l1 θ1'² sin(θ1−θ2) + g sin θ2 = 0
    expect(
      sameExpression(
        result.equations[0]!.residual,
        "l1*((m1+m2)*l1*theta1'' + m2*l2*theta2''*cos(theta1-theta2) + m2*l2*theta2'^2*sin(theta1-theta2) + (m1+m2)*g*sin(theta1))",
        q,
      ),
    ).toBe(true);
    expect(
      sameExpression(
        result.equations[1]!.residual,
        "m2*l2*(l2*theta2'' + l1*theta1''*cos(theta1-theta2) - l1*theta1'^2*sin(theta1-theta2) + g*sin(theta2))",
        q,
      ),
    ).toBe(true);
    // Compactness: product-to-sum canonical form, no sin²+cos² remnants.
    expect(result.equations.map((e) => topLevelTerms(e.residual).length)).toEqual([6, 4]);
    expect(text(result.equations[1]!.residual)).toBe(
      "m2*l1*l2*theta1''*cos(theta1 - theta2) + m2*l2^2*theta2'' - m2*l1*l2*theta1'^2*sin(theta1 - theta2) + m2*l2*g*sin(theta2)",
    );
    expect(result.equations.map((e) => text(e.residual)).join(" ")).not.toMatch(/\^2\*?cos\(|sin\([^)]*\)\^2/);
  });

  it("double pendulum from a direct kinetic energy gives the same equations as from Cartesian definitions", () => {
    const cartesian = deriveModel(chainModel({ links: 2 }));
    // Taylor (2005), ch. 11 (from memory): T and V of the double pendulum written directly.
    const direct = deriveModel({
      ...chainModel({ links: 2 }),
      definitions: [],
      kinetic: "1/2*(m1+m2)*l1^2*theta1'^2 + 1/2*m2*l2^2*theta2'^2 + m2*l1*l2*theta1'*theta2'*cos(theta1-theta2)",
      potential: "-(m1+m2)*g*l1*cos(theta1) - m2*g*l2*cos(theta2)",
    });
    expect(direct.equations.map((e) => e.residual)).toEqual(cartesian.equations.map((e) => e.residual));
    expect(direct.massMatrix).toEqual(cartesian.massMatrix);
  });

  it("cart–pole matches Florian's corrected equations", () => {
    const model: Model = {
      title: "Cart with inverted pendulum",
      coordinates: [coord("x", "m"), coord("theta")],
      parameters: [param("M", "kg"), param("m", "kg"), param("l", "m"), param("g", "m/s^2")],
      inputs: [{ name: "F", unit: "N" }],
      definitions: [
        { name: "xp", expr: "x + l*sin(theta)" },
        { name: "yp", expr: "l*cos(theta)" },
      ],
      kinetic: "1/2*M*x'^2 + 1/2*m*(xp'^2 + yp'^2)",
      potential: "m*g*yp",
      forces: { x: "F" },
    };
    const result = deriveModel(model);
    const q = { coordinates: ["x", "theta"] };
    // R. V. Florian, "Correct equations for the dynamics of the cart-pole system" (2007), from memory:
    // (M+m) x'' + m l θ'' cos θ − m l θ'² sin θ = F;  m l x'' cos θ + m l² θ'' − m g l sin θ = 0
    expect(sameExpression(result.equations[0]!.residual, "(M+m)*x'' + m*l*theta''*cos(theta) - m*l*theta'^2*sin(theta) - F", q)).toBe(true);
    expect(sameExpression(result.equations[1]!.residual, "m*l*x''*cos(theta) + m*l^2*theta'' - m*g*l*sin(theta)", q)).toBe(true);
    expect(result.cyclic).toEqual(["x"]);
    // Neither M nor f contains x itself: every equilibrium is one of a continuum along the track.
    expect(result.freeCoordinates).toEqual(["x"]);
    // x is cyclic but the force F acts on it: its momentum is not conserved, nor is h.
    expect(result.conserved).toEqual([]);
    // Lagrange's equation of a cyclic x leaves dp/dt = F (fact of the trade).
    expect(result.cyclicMomenta).toHaveLength(1);
    const [balance] = result.cyclicMomenta;
    expect([balance!.coordinate, balance!.conserved, text(balance!.rate), balance!.actedOnBy]).toEqual(["x", false, "F", ["applied force"]]);
    expect(sameExpression(balance!.momentum, "(M+m)*x' + m*l*theta'*cos(theta)", q)).toBe(true);

    // With wheel damping D = ½ b x'² as well: dp/dt = F − b x'; without either, p is conserved.
    const damped = deriveModel({ ...model, parameters: [...model.parameters, param("b", "N*s/m")], dissipation: "1/2*b*x'^2" });
    expect(damped.cyclicMomenta.map((c) => [c.conserved, c.actedOnBy])).toEqual([[false, ["applied force", "dissipation"]]]);
    expect(sameExpression(damped.cyclicMomenta[0]!.rate, "F - b*x'", q)).toBe(true);
    const free = deriveModel({ ...model, forces: {} });
    expect(free.cyclicMomenta.map((c) => [c.conserved, text(c.rate), c.actedOnBy])).toEqual([[true, "0", []]]);
    expect(free.conserved.map((c) => c.name)).toContain("momentum of x");
  });

  it("Atwood machine with a heavy pulley has a = g (m1 − m2)/(m1 + m2 + J/r²)", () => {
    const model: Model = {
      title: "Hoist test: two masses over a pulley",
      coordinates: [coord("y", "m")],
      parameters: [param("m1", "kg"), param("m2", "kg"), param("J", "kg*m^2"), param("r", "m"), param("g", "m/s^2")],
      definitions: [{ name: "alpha", expr: "y/r" }],
      kinetic: "1/2*(m1 + m2)*y'^2 + 1/2*J*alpha'^2",
      potential: "-m1*g*y + m2*g*y",
    };
    const result = deriveModel(model);
    expect(sameExpression(result.massMatrix[0]![0]!, "m1 + m2 + J/r^2")).toBe(true);
    const random = mulberry32(5);
    for (let i = 0; i < 5; i++) {
      const env = randomEnv(model, random);
      const a = evaluate(result.forcing[0]!, env) / evaluate(result.massMatrix[0]![0]!, env);
      // Halliday, Resnick & Walker (introductory physics), from memory: a = g (m1−m2)/(m1+m2+J/r²)
      const published = (env.g! * (env.m1! - env.m2!)) / (env.m1! + env.m2! + env.J! / env.r! ** 2);
      expect(close(a, published, 1e-12)).toBe(true);
    }
  });

  it("bead on a spinning hoop: equation of motion, its off-axis equilibrium and the Jacobi integral", () => {
    const model: Model = {
      title: "Slider on a rotating ring",
      coordinates: [coord("theta")],
      parameters: [param("m", "kg"), param("R", "m"), param("w", "rad/s"), param("g", "m/s^2")],
      definitions: [
        { name: "x", expr: "R*sin(theta)*cos(w*t)" },
        { name: "y", expr: "R*sin(theta)*sin(w*t)" },
        { name: "z", expr: "-R*cos(theta)" },
      ],
      kinetic: "1/2*m*(x'^2 + y'^2 + z'^2)",
      potential: "m*g*z",
    };
    const result = deriveModel(model);
    // Standard rotating-hoop example (e.g. Taylor 2005, ch. 7; from memory): m R² θ'' = m R² ω² sin θ cos θ − m g R sin θ
    expect(
      sameExpression(result.equations[0]!.residual, "m*R^2*theta'' - m*R^2*w^2*sin(theta)*cos(theta) + m*g*R*sin(theta)", { coordinates: ["theta"] }),
    ).toBe(true);
    // The forcing vanishes at cos θ = g/(ω² R) (same source; the equilibrium solver is tested elsewhere).
    const env: Env = { m: 0.2, R: 0.5, w: 7, g: 9.81, t: 0.3, "theta'": 0 };
    env.theta = Math.acos(env.g! / (env.w! ** 2 * env.R!));
    expect(Math.abs(evaluate(result.forcing[0]!, env))).toBeLessThan(1e-12);
    // The rotation enters L only through t-free terms, so the energy function (Jacobi integral) is conserved.
    expect(result.explicitTime).toBe(false);
    expect(result.conserved.map((c) => c.name)).toEqual(["energy function"]);
    expect(sameExpression(result.energy, "1/2*m*R^2*theta'^2 - 1/2*m*R^2*w^2*sin(theta)^2 - m*g*R*cos(theta)", { coordinates: ["theta"] })).toBe(true);
  });

  it("central-force orbit: φ cyclic, angular momentum and energy conserved, Hamiltonian", () => {
    const model: Model = {
      title: "Tethered probe in a central field",
      coordinates: [coord("r", "m"), coord("phi")],
      parameters: [param("mu", "kg"), param("k", "N*m^2")],
      definitions: [
        { name: "x", expr: "r*cos(phi)" },
        { name: "y", expr: "r*sin(phi)" },
      ],
      kinetic: "1/2*mu*(x'^2 + y'^2)",
      potential: "-k/r",
    };
    const result = deriveModel(model);
    const q = { coordinates: ["r", "phi"] };
    // Goldstein, Classical Mechanics, ch. 3 (from memory): μ r'' − μ r φ'² + k/r² = 0; d/dt(μ r² φ') = 0.
    expect(sameExpression(result.equations[0]!.residual, "mu*r'' - mu*r*phi'^2 + k/r^2", q)).toBe(true);
    expect(text(result.equations[0]!.residual)).toBe("mu*r'' - mu*r*phi'^2 + k/r^2");
    expect(result.cyclic).toEqual(["phi"]);
    const angular = result.conserved.find((c) => c.name === "momentum of phi");
    expect(angular && sameExpression(angular.expr, "mu*r^2*phi'", q)).toBe(true);
    expect(result.conserved.map((c) => c.name)).toContain("energy function");
    // H = p_r²/(2μ) + p_φ²/(2μ r²) − k/r (same source).
    expect(result.hamiltonian.available && sameExpression(result.hamiltonian.expr, "p_r^2/(2*mu) + p_phi^2/(2*mu*r^2) - k/r", q)).toBe(true);
  });

  it("two masses and three springs: M, K and the normal-mode frequencies", () => {
    const model: Model = {
      title: "Two carriages between three springs",
      coordinates: [coord("x1", "m"), coord("x2", "m")],
      parameters: [param("m", "kg", 2), param("k", "N/m", 50)],
      kinetic: "1/2*m*x1'^2 + 1/2*m*x2'^2",
      potential: "1/2*k*x1^2 + 1/2*k*(x2 - x1)^2 + 1/2*k*x2^2",
    };
    const result = deriveModel(model);
    expect(result.massMatrix.map((row) => row.map(text))).toEqual([
      ["m", "0"],
      ["0", "m"],
    ]);
    // The springs hold both carriages: no coordinate is free.
    expect(result.freeCoordinates).toEqual([]);
    // K = −∂f/∂x, from the forcing.
    const q = { coordinates: ["x1", "x2"] };
    expect(sameExpression(result.forcing[0]!, "-2*k*x1 + k*x2", q)).toBe(true);
    expect(sameExpression(result.forcing[1]!, "k*x1 - 2*k*x2", q)).toBe(true);
    const env: Env = { m: 2, k: 50, x1: 0, x2: 0, "x1'": 0, "x2'": 0 };
    const stiffness = [0, 1].map((i) => [0, 1].map((j) => -evaluate(result.forcing[i]!, { ...env, [`x${j + 1}`]: 1 })));
    const eig = new EigenvalueDecomposition(new Matrix(stiffness).div(env.m!));
    const omegas = eig.realEigenvalues.map(Math.sqrt).sort((a, b) => a - b);
    // Standard normal-mode example (from memory): ω1 = √(k/m), ω2 = √(3k/m); checked with ml-matrix eigenvalues.
    expect(close(omegas[0]!, Math.sqrt(50 / 2), 1e-12)).toBe(true);
    expect(close(omegas[1]!, Math.sqrt(150 / 2), 1e-12)).toBe(true);
  });

  it("damped forced oscillator: m x'' + c x' + k x = F, nothing conserved", () => {
    const model: Model = {
      title: "Isolator mount",
      coordinates: [coord("x", "m")],
      parameters: [param("m", "kg"), param("c", "N*s/m"), param("k", "N/m")],
      inputs: [{ name: "F", unit: "N" }],
      kinetic: "1/2*m*x'^2",
      potential: "1/2*k*x^2",
      dissipation: "1/2*c*x'^2",
      forces: { x: "F" },
    };
    const result = deriveModel(model);
    // Rao, Mechanical Vibrations (from memory): m x'' + c x' + k x = F(t).
    expect(text(result.equations[0]!.residual)).toBe("m*x'' + c*x' + k*x - F");
    expect(text(result.forcing[0]!)).toBe("-c*x' - k*x + F");
    expect(result.conserved).toEqual([]);
  });

  it("moving support: explicit time in the equation, energy function not conserved", () => {
    const model: Model = {
      title: "Pendulum on a shaker table",
      coordinates: [coord("theta")],
      parameters: [param("m", "kg"), param("l", "m"), param("a", "m"), param("w", "rad/s"), param("g", "m/s^2")],
      definitions: [
        { name: "xb", expr: "a*sin(w*t) + l*sin(theta)" },
        { name: "yb", expr: "-l*cos(theta)" },
      ],
      kinetic: "1/2*m*(xb'^2 + yb'^2)",
      potential: "m*g*yb",
    };
    const result = deriveModel(model);
    // Pendulum with a horizontally driven support (e.g. Taylor 2005, ch. 7 problems; from memory):
    // m l² θ'' − m a l ω² sin(ωt) cos θ + m g l sin θ = 0
    expect(sameExpression(result.equations[0]!.residual, "m*l^2*theta'' - m*a*l*w^2*sin(w*t)*cos(theta) + m*g*l*sin(theta)", { coordinates: ["theta"] })).toBe(
      true,
    );
    expect(result.explicitTime).toBe(true);
    expect(result.conserved).toEqual([]);
  });
});

describe("deriveModel: properties at random states (seeded)", () => {
  for (const [name, make] of models) {
    it(`${name}: residual = M q'' − f, M symmetric positive definite, outputs round-trip`, () => {
      const model = make();
      const result = deriveModel(model);
      const n = model.coordinates.length;
      const random = mulberry32(name.length * 7919);
      for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) expect(result.massMatrix[i]![j]).toEqual(result.massMatrix[j]![i]);
      for (let trial = 0; trial < 20; trial++) {
        const env = randomEnv(model, random);
        const M = result.massMatrix.map((row) => row.map((e) => evaluate(e, env)));
        for (let i = 0; i < n; i++) {
          let mq = -evaluate(result.forcing[i]!, env);
          for (let j = 0; j < n; j++) mq += M[i]![j]! * env[`${model.coordinates[j]!.name}''`]!;
          expect(close(evaluate(result.equations[i]!.residual, env), mq, 1e-10)).toBe(true);
        }
        const eigen = new EigenvalueDecomposition(new Matrix(M)).realEigenvalues;
        expect(Math.min(...eigen)).toBeGreaterThan(0);
      }
      const q = { coordinates: coordinatesOf(model), constants: [...model.parameters, ...(model.inputs ?? [])].map((p) => p.name) };
      for (const tree of [...result.equations.map((e) => e.residual), result.energy, ...result.forcing]) {
        // Printed text parses back to the same canonical sum.
        const c = canonicalize([text(tree)], q);
        expect(c.format(c.polys[0]!)).toBe(text(tree));
      }
    });
  }

  it("energy balance: dh/dt = Σ q'·(Euler–Lagrange expression) symbolically for conservative models", () => {
    for (const model of [chainModel({ links: 3 }), example("double-pendulum.model.json")]) {
      const result = deriveModel(model);
      const names = coordinatesOf(model);
      const c = canonicalize([result.energy, ...result.equations.map((e) => e.residual)], { coordinates: names });
      const balance = timeDerivative(c.algebra).apply(c.polys[0]!);
      names.forEach((_, i) => c.algebra.mulInto(balance, c.algebra.symbol(c.space.rates[i]!), c.polys[i + 1]!, MINUS_ONE));
      // A fact of the trade (any analytical mechanics text): for L without explicit t, dh/dt = Σ q_i'·EL_i.
      expect(balance.size).toBe(0);
    }
  });

  it("Hamiltonian equals the energy function at p = ∂L/∂q' (Legendre transform)", () => {
    for (const [name, make] of models) {
      const model = make();
      const result: DerivationResult = deriveModel(model);
      if (!result.hamiltonian.available) throw new Error(`${name}: ${result.hamiltonian.reason}`);
      const random = mulberry32(99);
      for (let trial = 0; trial < 10; trial++) {
        const env = randomEnv(model, random);
        for (const { coordinate, symbol } of result.hamiltonian.momenta) {
          env[symbol] = evaluate(result.momenta.find((p) => p.coordinate === coordinate)!.expr, env);
        }
        expect(close(evaluate(result.hamiltonian.expr, env), evaluate(result.energy, env), 1e-9), name).toBe(true);
      }
    }
  });

  it("says when the Hamiltonian is not formed", () => {
    const result = deriveModel(chainModel({ links: 4 }));
    expect(result.hamiltonian).toEqual({ available: false, reason: "the mass matrix is 4×4; it is inverted symbolically only up to 3×3" });
  });
});

describe("deriveModel: expressions without a canonical form", () => {
  // Found by the fuzz suite (seed 546873654): sin(pi) is 0, and 0^sin(q) has no logarithm to expand through.
  it("refuses a zero base with a variable exponent with a typed error naming the field", () => {
    const model = validateModel({
      title: "Fuzzed rig",
      coordinates: [{ name: "q", unit: "m" }],
      parameters: [],
      kinetic: "q",
      potential: "sin(pi)^sin(q)",
    });
    let refusal: unknown;
    try {
      deriveModel(model);
    } catch (error) {
      refusal = error;
    }
    expect(refusal).toBeInstanceOf(ModelError);
    expect((refusal as ModelError).message).toMatch(/zero base with a variable exponent/);
  });
});
