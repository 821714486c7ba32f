import { describe, expect, it } from "vitest";
import { compileExpressions } from "@/lib/mechanics/compile";
import { compileConstrainedSystem, constrainedSystemOf, findDependentRow, type CompiledConstrainedSystem } from "@/lib/mechanics/constraints";
import { deriveModel } from "@/lib/mechanics/derive";
import { ModelError } from "@/lib/mechanics/errors";
import type { Model } from "@/lib/mechanics/model";
import { printDerivation, type PrintedDerivation } from "@/lib/mechanics/print";
import { derivationReport } from "@/lib/mechanics/report";
import { checkModelUnits } from "@/lib/mechanics/units";
import { collectModelIssues, validateModel } from "@/lib/mechanics/validate-model";
import { mulberry32, uniform } from "./helpers/numeric";

const coord = (name: string, unit = "m") => ({ name, unit });
const param = (name: string, unit: string, value: number) => ({ name, unit, value });

/** Simple pendulum in Cartesian coordinates with the rod length as a position constraint (y up, pivot at the origin). */
const cartesianPendulum: Model = {
  title: "Cartesian pendulum",
  coordinates: [coord("x"), coord("y")],
  parameters: [param("m", "kg", 1.3), param("g", "m/s^2", 9.81), param("l", "m", 0.8)],
  kinetic: "m/2*(x'^2 + y'^2)",
  potential: "m*g*y",
  constraints: [{ name: "rod", expr: "x^2 + y^2 - l^2" }],
  outputs: [{ name: "tension", expr: "-2*l*lambda_rod", unit: "N" }],
};

/** The same pendulum by its angle from the downward vertical. */
const anglePendulum: Model = {
  title: "Angle pendulum",
  coordinates: [coord("theta", "rad")],
  parameters: cartesianPendulum.parameters,
  kinetic: "m/2*l^2*theta'^2",
  potential: "-m*g*l*cos(theta)",
};

/** Atwood machine: both heights, one rope over a massless, frictionless pulley. */
const atwood: Model = {
  title: "Atwood machine",
  coordinates: [coord("y1"), coord("y2")],
  parameters: [param("m1", "kg", 2), param("m2", "kg", 3.5), param("g", "m/s^2", 9.81), param("L", "m", 4)],
  kinetic: "m1/2*y1'^2 + m2/2*y2'^2",
  potential: "m1*g*y1 + m2*g*y2",
  constraints: [{ name: "rope", expr: "y1 + y2 - L" }],
};

/** A hoop rolling without slipping down an incline: x down the slope, theta its rotation. */
const hoop: Model = {
  title: "Hoop on an incline",
  coordinates: [coord("x"), coord("theta", "rad")],
  parameters: [param("M", "kg", 1.7), param("g", "m/s^2", 9.81), param("R", "m", 0.25), param("phi", "rad", 0.4)],
  kinetic: "M/2*x'^2 + M*R^2/2*theta'^2",
  potential: "-M*g*x*sin(phi)",
  rateConstraints: [{ name: "roll", expr: "x' - R*theta'" }],
  outputs: [{ name: "friction", expr: "-mu_roll", unit: "N" }],
};

/** A disk rolling upright on a plane: contact point (x, y), heading theta, spin phi. */
const verticalDisk: Model = {
  title: "Vertical rolling disk",
  coordinates: [coord("x"), coord("y"), coord("theta", "rad"), coord("phi", "rad")],
  parameters: [param("m", "kg", 2), param("R", "m", 0.3), param("I", "kg*m^2", 0.045), param("J", "kg*m^2", 0.09)],
  kinetic: "m/2*(x'^2 + y'^2) + I/2*theta'^2 + J/2*phi'^2",
  potential: "0",
  rateConstraints: [
    { name: "roll_x", expr: "x' - R*cos(theta)*phi'" },
    { name: "roll_y", expr: "y' - R*sin(theta)*phi'" },
  ],
};

/** A four-bar linkage, a closed loop: crank th1 (driven by tau), coupler th2, rocker th3, uniform bars. */
const fourBar: Model = {
  title: "Four-bar linkage",
  coordinates: [coord("th1", "rad"), coord("th2", "rad"), coord("th3", "rad")],
  parameters: [
    param("a", "m", 0.2),
    param("b", "m", 0.6),
    param("c", "m", 0.45),
    param("d", "m", 0.5),
    param("m1", "kg", 1),
    param("m2", "kg", 2),
    param("m3", "kg", 1.5),
    param("g", "m/s^2", 9.81),
  ],
  inputs: [{ name: "tau", unit: "N*m" }],
  definitions: [
    { name: "xc", expr: "a*cos(th1) + b/2*cos(th2)" },
    { name: "yc", expr: "a*sin(th1) + b/2*sin(th2)" },
  ],
  kinetic: "m1*a^2/6*th1'^2 + m2/2*(xc'^2 + yc'^2) + m2*b^2/24*th2'^2 + m3*c^2/6*th3'^2",
  potential: "m1*g*a/2*sin(th1) + m2*g*yc + m3*g*c/2*sin(th3)",
  forces: { th1: "tau" },
  constraints: [
    { name: "loop_x", expr: "a*cos(th1) + b*cos(th2) - c*cos(th3) - d" },
    { name: "loop_y", expr: "a*sin(th1) + b*sin(th2) - c*sin(th3)" },
  ],
  outputs: [{ name: "pin_load", expr: "sqrt(lambda_loop_x^2 + lambda_loop_y^2)", unit: "N" }],
};

/** The error `work` throws; fails the test when it throws nothing. */
function thrown(work: () => unknown): ModelError {
  try {
    work();
  } catch (error) {
    expect(error).toBeInstanceOf(ModelError);
    return error as ModelError;
  }
  throw new Error("expected an error");
}

function compiled(model: Model): { printed: PrintedDerivation; system: CompiledConstrainedSystem } {
  const printed = printDerivation(deriveModel(validateModel(model)));
  const parameters = Object.fromEntries(model.parameters.map((p) => [p.name, p.value!]));
  const inputs = (model.inputs ?? []).map((i) => i.name);
  return { printed, system: compileConstrainedSystem(constrainedSystemOf(printed, parameters, inputs)) };
}

/** Closed-form multipliers evaluated at a state, through the compiled (never eval'd) expressions. */
function closedForm(model: Model, printed: PrintedDerivation, q: number[], rates: number[], t = 0, u: number[] = []): number[] {
  const names = printed.coordinates;
  const variables = [...names, ...names.map((n) => `${n}'`), "t", ...(model.inputs ?? []).map((i) => i.name)];
  const parameters = Object.fromEntries(model.parameters.map((p) => [p.name, p.value!]));
  const evaluator = compileExpressions(
    printed.constraints.map((c) => c.multiplier!),
    variables,
    { constants: parameters },
  );
  const out = new Float64Array(printed.constraints.length);
  evaluator.evaluate([...q, ...rates, t, ...u], out);
  return Array.from(out);
}

/** Random states that satisfy each example's constraints (positions and rates). */
const consistent: Record<string, (random: () => number, system?: CompiledConstrainedSystem) => { q: number[]; rates: number[] }> = {
  fourBar(random, system) {
    // th1 and th1' at random; th2, th3 by Newton on the loop, their rates from A q' = 0.
    const q = [uniform(random, -3, 3), 1, 2];
    for (let iteration = 0; iteration < 50; iteration++) {
      const g = system!.positionResiduals(q, 0);
      const A = system!.jacobian(q, 0);
      const det = A[0]![1]! * A[1]![2]! - A[0]![2]! * A[1]![1]!;
      q[1]! -= (A[1]![2]! * g[0]! - A[0]![2]! * g[1]!) / det;
      q[2]! -= (A[0]![1]! * g[1]! - A[1]![1]! * g[0]!) / det;
    }
    const A = system!.jacobian(q, 0);
    const w = uniform(random, -3, 3);
    const det = A[0]![1]! * A[1]![2]! - A[0]![2]! * A[1]![1]!;
    const r0 = -A[0]![0]! * w;
    const r1 = -A[1]![0]! * w;
    return { q, rates: [w, (A[1]![2]! * r0 - A[0]![2]! * r1) / det, (A[0]![1]! * r1 - A[1]![1]! * r0) / det] };
  },
  pendulum(random) {
    const l = 0.8;
    const theta = uniform(random, -3, 3);
    const w = uniform(random, -3, 3);
    return { q: [l * Math.sin(theta), -l * Math.cos(theta)], rates: [l * Math.cos(theta) * w, l * Math.sin(theta) * w] };
  },
  atwood(random) {
    const y1 = uniform(random, 0.5, 3.5);
    const v = uniform(random, -2, 2);
    return { q: [y1, 4 - y1], rates: [v, -v] };
  },
  hoop(random) {
    const w = uniform(random, -5, 5);
    return { q: [uniform(random, 0, 3), uniform(random, -3, 3)], rates: [0.25 * w, w] };
  },
  disk(random) {
    const theta = uniform(random, -3, 3);
    const spin = uniform(random, -5, 5);
    return {
      q: [uniform(random, -1, 1), uniform(random, -1, 1), theta, uniform(random, -3, 3)],
      rates: [0.3 * Math.cos(theta) * spin, 0.3 * Math.sin(theta) * spin, uniform(random, -2, 2), spin],
    };
  },
};

describe("constraints: published checks", () => {
  it("the Cartesian pendulum moves like the angle form, and its multiplier gives the rod tension", () => {
    const { printed, system } = compiled(cartesianPendulum);
    const angle = deriveModel(validateModel(anglePendulum));
    const thetaDdot = compileExpressions([(angle.accelerations as { expr: import("@/lib/mechanics/expr/ast").Expr }[])[0]!.expr], ["theta", "theta'"], {
      constants: { m: 1.3, g: 9.81, l: 0.8 },
    });
    const random = mulberry32(3);
    const [m, g, l] = [1.3, 9.81, 0.8];
    for (let k = 0; k < 20; k++) {
      const theta = uniform(random, -3, 3);
      const w = uniform(random, -3, 3);
      const q = [l * Math.sin(theta), -l * Math.cos(theta)];
      const rates = [l * Math.cos(theta) * w, l * Math.sin(theta) * w];
      const solution = system.solve(q, rates, 0);
      const [xdd, ydd] = solution.accelerations as [number, number];
      // x = l sin θ, y = −l cos θ ⇒ x'' cos θ + y'' sin θ = l θ'' (differentiating twice).
      const out = new Float64Array(1);
      thetaDdot.evaluate([theta, w], out);
      expect((xdd * Math.cos(theta) + ydd * Math.sin(theta)) / l).toBeCloseTo(out[0]!, 9);
      // The θ'' of the angle form is −(g/l) sin θ (simple pendulum; fact of the trade).
      expect(out[0]).toBeCloseTo((-g / l) * Math.sin(theta), 12);
      // String tension T = m g cos θ + m l θ'² (radial balance of the pendulum bob; from memory).
      const tension = system.outputs(q, rates, solution, 0)[0]!;
      expect(tension).toBeCloseTo(m * g * Math.cos(theta) + m * l * w * w, 9);
      expect(-2 * l * closedForm(cartesianPendulum, printed, q, rates)[0]!).toBeCloseTo(tension, 9);
    }
  });

  it("the Cartesian pendulum follows the angle form over a 2 s run", () => {
    const { system } = compiled(cartesianPendulum);
    const [g, l] = [9.81, 0.8];
    const theta0 = 1.1;
    // Both integrated by classical RK4 with the same step.
    let cart = [l * Math.sin(theta0), -l * Math.cos(theta0), 0, 0];
    let ang = [theta0, 0];
    const h = 1e-3;
    const fc = (s: number[]) => {
      const a = system.solve(s.slice(0, 2), s.slice(2), 0).accelerations;
      return [s[2]!, s[3]!, a[0]!, a[1]!];
    };
    const fa = (s: number[]) => [s[1]!, (-g / l) * Math.sin(s[0]!)];
    const rk4 = (f: (s: number[]) => number[], s: number[]) => {
      const k1 = f(s);
      const k2 = f(s.map((x, i) => x + (h / 2) * k1[i]!));
      const k3 = f(s.map((x, i) => x + (h / 2) * k2[i]!));
      const k4 = f(s.map((x, i) => x + h * k3[i]!));
      return s.map((x, i) => x + (h / 6) * (k1[i]! + 2 * k2[i]! + 2 * k3[i]! + k4[i]!));
    };
    for (let step = 0; step < 2000; step++) {
      cart = rk4(fc, cart);
      ang = rk4(fa, ang);
    }
    // Same motion: the Cartesian bob sits where the angle form puts it (short run, so drift stays small).
    expect(cart[0]!).toBeCloseTo(l * Math.sin(ang[0]!), 6);
    expect(cart[1]!).toBeCloseTo(-l * Math.cos(ang[0]!), 6);
  });

  it("the Atwood machine's rope tension is 2 m1 m2 g / (m1 + m2)", () => {
    const report = derivationReport(atwood);
    expect(report.constraints!.map((c) => [c.name, c.kind])).toEqual([["rope", "position"]]);
    const { printed, system } = compiled(atwood);
    const [m1, m2, g] = [2, 3.5, 9.81];
    // Atwood machine, tension 2 m1 m2 g/(m1 + m2) (any mechanics text; from memory). λ is the tension: the rope pulls each mass up.
    const expected = (2 * m1 * m2 * g) / (m1 + m2);
    expect(closedForm(atwood, printed, [1, 3], [0.3, -0.3])[0]).toBeCloseTo(expected, 10);
    expect(system.solve([1, 3], [0.3, -0.3], 0).multipliers[0]).toBeCloseTo(expected, 10);
    // The multiplier is a constant: the closed form mentions no coordinate.
    expect(report.constraints![0]!.multiplier).not.toMatch(/y1|y2/);
  });

  it("a hoop rolling down an incline accelerates at g sin φ / 2 held by friction M g sin φ / 2", () => {
    const report = derivationReport(hoop);
    const { printed, system } = compiled(hoop);
    const [M, g, phi] = [1.7, 9.81, 0.4];
    expect(report.constraints).toEqual([{ name: "roll", kind: "rate", expr: "-R*theta' + x'", multiplier: "-M*g*sin(phi)/2" }]);
    const solution = system.solve([0.5, 0.2], [0.25, 1], 0);
    // Goldstein, Poole and Safko, Classical Mechanics, 3rd ed., §2.4: hoop rolling down an incline, ẍ = g sin φ / 2.
    expect(solution.accelerations[0]).toBeCloseTo((g * Math.sin(phi)) / 2, 12);
    // Same section: the force of friction is M g sin φ / 2, up the slope (μ is the generalized force on x, so negative).
    expect(system.outputs([0.5, 0.2], [0.25, 1], solution, 0)[0]).toBeCloseTo((M * g * Math.sin(phi)) / 2, 12);
    expect(-closedForm(hoop, printed, [0.5, 0.2], [0.25, 1])[0]!).toBeCloseTo((M * g * Math.sin(phi)) / 2, 12);
    expect(printed.constraints[0]!.unit).toBe("kg*m/s^2 (N)");
  });

  it("the vertical rolling disk keeps its spin and heading rates", () => {
    const { system } = compiled(verticalDisk);
    const random = mulberry32(5);
    for (let k = 0; k < 10; k++) {
      const { q, rates } = consistent.disk!(random);
      const { accelerations } = system.solve(q, rates, 0);
      // Upright rolling disk: θ'' = 0 and φ'' = 0, heading and spin rates are constants of the motion
      // (Goldstein, Poole and Safko, Classical Mechanics, 3rd ed., §2.4, vertical disk rolling on a plane; from memory).
      expect(Math.abs(accelerations[2]!)).toBeLessThan(1e-12);
      expect(Math.abs(accelerations[3]!)).toBeLessThan(1e-12);
    }
  });
});

describe("constraints: closed form against the numeric augmented solve", () => {
  const examples: [string, Model][] = [
    ["pendulum", cartesianPendulum],
    ["atwood", atwood],
    ["hoop", hoop],
    ["disk", verticalDisk],
    ["fourBar", fourBar],
  ];
  it.each(examples)("%s: every closed-form multiplier agrees at random consistent states", (key, model) => {
    const { printed, system } = compiled(model);
    expect(printed.constraints.every((c) => c.multiplier !== null)).toBe(true);
    const random = mulberry32(17);
    for (let k = 0; k < 12; k++) {
      const { q, rates } = consistent[key]!(random, system);
      const u = (model.inputs ?? []).map(() => uniform(random, -2, 2));
      // The constraints hold at the state (position and rate level).
      for (const r of system.positionResiduals(q, 0)) expect(Math.abs(r)).toBeLessThan(1e-12);
      for (const r of system.rateResiduals(q, rates, 0)) expect(Math.abs(r)).toBeLessThan(1e-9);
      const numeric = system.solve(q, rates, 0, u).multipliers;
      const closed = closedForm(model, printed, q, rates, 0, u);
      // Consistency of two computations of one quantity (no published value needed).
      closed.forEach((value, i) => expect(value).toBeCloseTo(numeric[i]!, 8));
    }
  });

  it("the equations keep residual = M q'' − forcing with the multiplier terms", () => {
    const report = derivationReport(cartesianPendulum);
    expect(report.equations.map((e) => e.residual)).toEqual(["m*x'' - 2*lambda_rod*x", "m*y'' - 2*lambda_rod*y + m*g"]);
    expect(report.forcing).toEqual(["2*lambda_rod*x", "2*lambda_rod*y - m*g"]);
    expect(report.outputs).toEqual([{ name: "tension", expr: "-2*l*lambda_rod", unit: "N" }]);
  });

  it("leaves the multiplier null beyond the closed-form size and evaluates it numerically", () => {
    // A chain of point masses on a line joined by rigid spacers: 9 coordinates and 3 constraints (12 > 8).
    const n = 9;
    const coordinates = Array.from({ length: n }, (_, i) => coord(`s${i}`));
    const model: Model = {
      title: "spacers",
      coordinates,
      parameters: [param("m", "kg", 1), param("k", "N/m", 10), param("d", "m", 0.5)],
      kinetic: coordinates.map((c) => `m/2*${c.name}'^2`).join(" + "),
      potential: coordinates.map((c) => `k/2*${c.name}^2`).join(" + "),
      constraints: [0, 1, 2].map((i) => ({ name: `spacer${i}`, expr: `s${i + 1} - s${i} - d` })),
    };
    const { printed, system } = compiled(model);
    expect(printed.constraints.every((c) => c.multiplier === null && /12×12/.test(c.reason ?? ""))).toBe(true);
    const q = [0, 0.5, 1, 1.5, 0, 0, 0, 0, 0];
    const { multipliers, accelerations } = system.solve(q, new Array(n).fill(0), 0);
    // The spacers move rigidly: the accelerations of s0..s3 agree (a rigid chain; fact of the trade).
    expect(accelerations[1]).toBeCloseTo(accelerations[0]!, 12);
    expect(accelerations[3]).toBeCloseTo(accelerations[0]!, 12);
    // Four unit masses with springs k at s = 0, 0.5, 1, 1.5: common acceleration −k·Σs/4 = −7.5 m/s².
    expect(accelerations[0]).toBeCloseTo(-7.5, 10);
    expect(multipliers).toHaveLength(3);
  });
});

describe("constraints: validation and independence", () => {
  const issues = (model: unknown) => collectModelIssues(model).issues.map((e) => `${e.field}: ${e.message}`);

  it("refuses duplicate constraint and output names and names clashing with a multiplier", () => {
    expect(issues({ ...atwood, constraints: [atwood.constraints![0], atwood.constraints![0]] })).toEqual([
      'constraints[1].name: "rope" is already the name of constraints[0]',
    ]);
    expect(issues({ ...hoop, outputs: [hoop.outputs![0], hoop.outputs![0]] })).toEqual(['outputs[1].name: "friction" is already the name of an output']);
    expect(issues({ ...atwood, parameters: [...atwood.parameters, param("lambda_rope", "N", 1)] })).toEqual([
      'constraints[0].name: its multiplier "lambda_rope" is already declared as a parameter',
    ]);
  });

  it("refuses rates in a position constraint, inputs in any constraint and unknown symbols in outputs", () => {
    expect(issues({ ...atwood, constraints: [{ name: "rope", expr: "y1' + y2'" }] })).toEqual([
      "constraints[0].expr: a position constraint may not depend on rates (write it under rateConstraints)",
    ]);
    expect(issues({ ...atwood, inputs: [coord("F", "N")], constraints: [{ name: "rope", expr: "y1 + y2 - F/m1*1" }] })[0]).toMatch(
      /may not depend on the input "F"/,
    );
    expect(issues({ ...hoop, outputs: [{ name: "f", expr: "mu_slip", unit: "N" }] })).toEqual(['outputs[0].expr: unknown symbol "mu_slip"']);
  });

  it("refuses a rate constraint that is not linear in the rates, or has none", () => {
    expect(() => deriveModel(validateModel({ ...hoop, rateConstraints: [{ name: "roll", expr: "x'^2 - R^2*theta'^2" }] }))).toThrow(
      /rateConstraints\[0\]|not linear in the rates/,
    );
    expect(thrown(() => deriveModel(validateModel({ ...hoop, rateConstraints: [{ name: "roll", expr: "x'^2 - R^2*theta'^2" }] }))).field).toBe(
      "rateConstraints[0].expr",
    );
    expect(() => deriveModel(validateModel({ ...hoop, rateConstraints: [{ name: "roll", expr: "x - R*theta" }] }))).toThrow(/contains no rate/);
  });

  it("checks units of constraints and outputs with the one unit reader", () => {
    expect(() => checkModelUnits(validateModel({ ...hoop, outputs: [{ name: "friction", expr: "mu_roll", unit: "N*m" }] }))).toThrow(
      /output "friction" has unit kg\*m\/s\^2 \(N\) but its unit is given as kg\*m\^2\/s\^2 \(J\)/,
    );
    expect(() => checkModelUnits(validateModel({ ...atwood, constraints: [{ name: "rope", expr: "y1 + y2 - m1" }] }))).toThrow(/has unit kg but/);
    // The derived residuals (with λ terms) pass the unit check of generalized forces.
    expect(() => derivationReport(cartesianPendulum)).not.toThrow();
  });

  it("names a redundant or contradicting constraint", () => {
    const twice = { ...atwood, constraints: [atwood.constraints![0]!, { name: "rope2", expr: "2*y1 + 2*y2 - 2*L" }] };
    expect(() => derivationReport(twice)).toThrow(/"rope2" is a combination of "rope"/);
    expect(thrown(() => derivationReport(twice)).field).toBe("constraints[1]");
  });

  it("tells a redundant constraint from an inconsistent one at a state", () => {
    const rows = (other: string) =>
      compileConstrainedSystem({
        coordinates: ["x", "y"],
        massMatrix: [
          ["1", "0"],
          ["0", "1"],
        ],
        forcing: ["lambda_a + lambda_b", "0"],
        parameters: {},
        constraints: [
          { name: "a", kind: "position", symbol: "lambda_a", expr: "x - 1", jacobian: ["1", "0"], bias: "0" },
          { name: "b", kind: "position", symbol: "lambda_b", expr: other, jacobian: ["2", "0"], bias: "0" },
        ],
      });
    expect(rows("2*x - 2").checkIndependence([1, 0], [0, 0], 0)).toMatchObject({ name: "b", kind: "redundant", combinationOf: ["a"] });
    expect(rows("2*x - 3").checkIndependence([1, 0], [0, 0], 0)).toMatchObject({ name: "b", kind: "inconsistent", combinationOf: ["a"] });
    expect(() => rows("2*x - 3").solve([1, 0], [0, 0], 0)).toThrow(/constraints\[1\]|contradicts "a"/);
    expect(thrown(() => rows("2*x - 3").solve([1, 0], [0, 0], 0)).field).toBe("constraints[1]");
    expect(
      findDependentRow([
        [1, 0],
        [0, 1],
      ]),
    ).toBeNull();
    expect(
      findDependentRow([
        [1, 1, 0],
        [0, 1, 1],
        [1, 2, 1],
      ]),
    ).toMatchObject({ index: 2, combinationOf: [0, 1] });
  });

  it("evaluates the outputs of a model without constraints too", () => {
    const system = compileConstrainedSystem({
      coordinates: ["x"],
      inputs: ["F"],
      massMatrix: [["m"]],
      forcing: ["F - k*x"],
      parameters: { m: 2, k: 8 },
      constraints: [],
      outputs: [
        { name: "spring", expr: "k*x" },
        { name: "acc", expr: "x''" },
      ],
    });
    const solution = system.solve([0.5], [0], 0, [1]);
    // Newton's second law: x'' = (F − k x)/m = (1 − 4)/2 (fact of the trade).
    expect(solution).toEqual({ accelerations: [-1.5], multipliers: [] });
    expect(system.outputs([0.5], [0], solution, 0, [1])).toEqual([4, -1.5]);
    expect(system.checkIndependence([0.5], [0], 0)).toBeNull();
  });
});
