/**
 * evaluateModel on the demo models with an in-process engine: the verdicts the
 * notebook shows (stability, modes, conserved quantities) checked against
 * hand results for the crane trolley, the camera gimbal and the seat rig; and
 * how the engine's results are shown (display form, accelerations, free coordinates).
 */
import { describe, expect, it } from "vitest";
import {
  analyseSystem,
  codeExportInput,
  distinctEquilibria,
  energyNotConservedReason,
  evaluateModel,
  mechanicalSystemOf,
  withoutRoundingNoise,
  type EvaluationSettings,
} from "@/lib/evaluation/evaluate";
import { type Equilibrium, type Model, STABILITY_TOLERANCE, chainModel } from "@/lib/mechanics";
import { evaluateDemo, inProcessRunner } from "./in-process";

const g = 9.81;

describe("stability verdicts on the demo models", () => {
  it("crane trolley: hanging is marginal in the list and in the cell, upright unstable, stable-or-marginal listed first", async () => {
    const hanging = await evaluateDemo("Gantry crane: trolley");
    const labels = hanging.linearization!.equilibria.map((e) => e.label);
    expect(labels).toEqual(["x = 0, theta = 0 (marginal)", "x = 0, theta = 3.14159 (unstable)"]);
    const selected = hanging.linearization!.selected!;
    expect(selected.index).toBe(0);
    // The trolley is free to roll (x cyclic) but damped by b: λ = 0 once, every other eigenvalue decays.
    expect(selected.stability).toBe("marginal");
    expect(selected.stability).toBe(hanging.equilibria![0]!.stability);
    expect(selected.stabilityReason).toMatch(/^λ = 0 is an eigenvalue/);
    expect(selected.eigenvalues.filter((l) => l.re === 0 && l.im === 0)).toHaveLength(1);
    expect(selected.eigenvalues.filter((l) => !(l.re === 0 && l.im === 0)).every((l) => l.re < 0)).toBe(true);

    const upright = await evaluateDemo("Gantry crane: trolley", 1);
    expect(upright.linearization!.selected!.stability).toBe("unstable");
    expect(upright.linearization!.selected!.stability).toBe(upright.equilibria![1]!.stability);
  });

  it("crane trolley: the swing frequency is √(g/l·(1 + m/M)), and the upright point keeps its growing mode in the table", async () => {
    const [M, m, l] = [850, 2000, 6.5];
    // Pendulum on a free trolley: ω² = (g/l)(1 + m/M) (fact of the trade; the demo's own note states it).
    const omega = Math.sqrt((g / l) * (1 + m / M));
    const hanging = (await evaluateDemo("Gantry crane: trolley")).linearization!.selected!;
    expect(hanging.modes.map((mode) => mode.kind)).toEqual(["rigid", "oscillating"]);
    expect(hanging.modes[1]!.hertz!).toBeCloseTo(omega / (2 * Math.PI), 10);
    expect(hanging.modes[0]!.shape).toEqual([1, 0]);

    const upright = (await evaluateDemo("Gantry crane: trolley", 1)).linearization!.selected!;
    // Two coordinates, two modes: the divergent one (ω² = −(g/l)(1 + m/M), same source) is listed, not dropped.
    expect(upright.modes).toHaveLength(2);
    const divergent = upright.modes.find((mode) => mode.kind === "divergent")!;
    expect(divergent.growthRate!).toBeCloseTo(omega, 10);
    expect(divergent.hertz).toBeNull();
    expect(upright.modes.find((mode) => mode.kind === "rigid")!.hertz).toBe(0);
  });

  it("crane with a rope constraint: the same swing as the angle form, one equilibrium per family, and the rope loads as outputs", async () => {
    const [M, m, l] = [850, 2000, 6.5];
    const result = await evaluateDemo("Gantry crane: hoist");
    // The trolley and load moving together is a continuum of rest points: shown once, nearest to zero.
    expect(result.linearization!.equilibria.map((e) => e.label)).toEqual(["x = 0, xl = 0, yl = -6.5 (marginal)", "x = 0, xl = 0, yl = 6.5 (unstable)"]);
    const selected = result.linearization!.selected!;
    expect(selected.constrained).toMatchObject({ independent: ["x", "xl"], dependent: ["yl"] });
    expect(selected.shapeCoordinates).toEqual(["x", "xl", "yl"]);
    // Same frequency as the angle-form demo above: ω² = (g/l)(1 + m/M) (fact of the trade).
    const omega = Math.sqrt((g / l) * (1 + m / M));
    expect(selected.modes.map((mode) => mode.kind)).toEqual(["rigid", "oscillating"]);
    expect(selected.modes[1]!.hertz!).toBeCloseTo(omega / (2 * Math.PI), 10);
    // Rope tension at rest: the load's weight, T = −2 l λ = m g (fact of the trade).
    expect(-2 * l * selected.constrained!.multipliers[0]!.value).toBeCloseTo(m * g, 8);
    // The rope's horizontal pull on the trolley, −2 λ (xl − x), is m g times the rope's lean (xl − x)/l to
    // first order; the tension itself does not change to first order (T = m g cos θ + m l θ'², fact of the trade).
    const outputs = selected.outputs!;
    const side = outputs.C[outputs.names.indexOf("trolley_side_load")]!;
    expect(side).toEqual([(-m * g) / l, (m * g) / l, 0, 0].map((v) => expect.closeTo(v, 6)));
    expect(outputs.C[outputs.names.indexOf("rope_tension")]!.every((v) => Math.abs(v) < 1e-9)).toBe(true);
    expect(outputs.notes).toEqual([]);
  });

  it("camera gimbal: marginal tilt-down point with the compound-pendulum frequency and its damped eigenvalue", async () => {
    const result = await evaluateDemo("Camera gimbal");
    expect(result.linearization!.equilibria.map((e) => e.label)).toEqual(["psi = 0, theta = 0 (marginal)", "psi = 0, theta = 3.14159 (unstable)"]);
    const selected = result.linearization!.selected!;
    expect(selected.stability).toBe("marginal");
    const [m, h, I1, ct] = [1.6, 0.003, 0.009, 0.001];
    // Compound pendulum ω² = m g h / I about the tilt axis; with viscous damping λ = −c/2I ± i√(ω² − (c/2I)²) (fact of the trade).
    const omega = Math.sqrt((m * g * h) / I1);
    const tilt = selected.modes.find((mode) => mode.kind === "oscillating")!;
    expect(tilt.hertz!).toBeCloseTo(omega / (2 * Math.PI), 10);
    expect(tilt.shape).toEqual([0, 1]);
    const decay = ct / (2 * I1);
    expect(tilt.eigenvalue!.re).toBeCloseTo(-decay, 10);
    expect(tilt.eigenvalue!.im).toBeCloseTo(Math.sqrt(omega * omega - decay * decay), 10);
  });

  it("seat rig: the one equilibrium is asymptotically stable", async () => {
    const selected = (await evaluateDemo("Seat-suspension")).linearization!.selected!;
    expect(selected.stability).toBe("stable");
    expect(selected.stabilityReason).toMatch(/^every eigenvalue has a negative real part/);
    // A = [0 1; −k/m −c/m] for m z'' + c z' + k z = F (fact of the trade).
    expect(selected.A).toEqual([[0, 1], [-42000 / 95, -1300 / 95].map((v) => expect.closeTo(v, 10))]);
  });

  it("lists a stable equilibrium first when there is one", async () => {
    // Pendulum hanging from a pivot: θ = 0 stable, θ = π unstable; the stable one is listed (and selected) first
    // whatever order the search meets them in (fact of the trade).
    const system = {
      coordinates: ["theta"],
      coordinateUnits: ["rad"],
      inputs: [],
      massMatrix: [["m*l^2"]],
      forcing: ["-m*g*l*sin(theta) - c*theta'"],
      parameters: { m: 1, l: 1, g, c: 0.1 },
    };
    const analysis = await analyseSystem(inProcessRunner, system, { equilibriumIndex: 0, inputValues: {} });
    expect(analysis.equilibria.map((e) => e.stability)).toEqual(["stable", "unstable"]);
    expect(analysis.linearization!.selected!.stability).toBe("stable");
  });
});

describe("rounding noise in the linearization", () => {
  it("writes an entry that is rounding noise next to its block as 0", async () => {
    // (a + b − c) with a + b = c is 5.6e-17 in floating point, not 0: a coupling that cancels by design.
    const system = {
      coordinates: ["x", "y"],
      coordinateUnits: ["m", "m"],
      inputs: [],
      massMatrix: [
        ["1", "0"],
        ["0", "1"],
      ],
      forcing: ["-k*x - (a + b - c)*k*y - d*x'", "-k*y - d*y'"],
      parameters: { k: 40, a: 0.1, b: 0.2, c: 0.3, d: 0.5 },
    };
    const analysis = await analyseSystem(inProcessRunner, system, { equilibriumIndex: 0, inputValues: {} });
    const raw = analysis.equilibria[0]!.linearization.A;
    expect(raw[2]![1]).not.toBe(0);
    expect(Math.abs(raw[2]![1]!)).toBeLessThan(1e-14);
    const shown = analysis.linearization!.selected!.A;
    expect(shown[2]![1]).toBe(0);
    expect(shown[2]![0]).toBe(-40);
    expect(shown[2]![2]).toBe(-0.5);
  });

  it("judges each entry against its own block, so a small damping entry next to a large stiffness survives", () => {
    // −2e-4 is 5e-14 of the stiffness block but the whole of its damping block; 3.67e-6 and 3.67e-18 are noise in theirs.
    const A = [
      [0, 0, 1, 0],
      [0, 0, 0, 1],
      [-4e9, 3.67e-6, -2e-4, 3.67e-18],
      [1e9, -4e9, 0, -2e-4],
    ];
    expect(withoutRoundingNoise(A, 2)).toEqual([
      [0, 0, 1, 0],
      [0, 0, 0, 1],
      [-4e9, 0, -2e-4, 0],
      [1e9, -4e9, 0, -2e-4],
    ]);
  });

  it("writes eigenvalue parts below the stability tolerance as 0", async () => {
    const selected = (await evaluateDemo("Camera gimbal")).linearization!.selected!;
    const tolerance = STABILITY_TOLERANCE * Math.sqrt((1.6 * g * 0.003) / 0.009);
    expect(selected.eigenvalues.every((l) => l.re === 0 || Math.abs(l.re) > tolerance)).toBe(true);
    expect(selected.eigenvalues.some((l) => l.re === 0 && l.im === 0)).toBe(true);
  });
});

describe("conserved quantities", () => {
  it("crane trolley: x is cyclic, but F and the wheel damping change its momentum", async () => {
    const result = await evaluateDemo("Gantry crane: trolley");
    expect(result.conserved).toEqual([]);
    // Lagrange's equation for a cyclic x with D = ½ b x'² and force F: dp/dt = F − b x' (fact of the trade).
    expect(result.cyclicMomenta).toEqual([
      {
        coordinate: "x",
        conserved: false,
        actedOnBy: ["applied force", "dissipation"],
        rateLatex: expect.stringContaining("\\dot{p_{x}} = -b\\,\\dot{x} + F"),
      },
    ]);
    expect(result.energyNotConserved).toBe("the dissipation function removes energy; applied forces act (F on x)");
  });

  it("camera gimbal: pan is cyclic, its momentum changed by the pan torque and bearing damping", async () => {
    const result = await evaluateDemo("Camera gimbal");
    expect(result.cyclicMomenta!.map((c) => [c.coordinate, c.conserved, c.actedOnBy])).toEqual([["psi", false, ["applied force", "dissipation"]]]);
    expect(result.cyclicMomenta![0]!.rateLatex).toContain("\\dot{p_{\\psi}} = -c_{p}\\,\\dot{\\psi} + \\tau_{p}");
  });

  it("names explicit time among the reasons the energy function is not conserved", () => {
    const model = { title: "t", coordinates: [{ name: "x", unit: "m" }], parameters: [], kinetic: "x'^2", potential: "0" };
    expect(energyNotConservedReason(model, { explicitTime: true })).toBe("the Lagrangian depends on t explicitly");
  });
});

describe("how the derivation is shown", () => {
  const settings: EvaluationSettings = { linearization: { equilibriumIndex: 0, inputValues: {} }, codeLanguages: [] };
  /** A 3-link chain with every parameter given a value. */
  const chain3: Model = { ...chainModel({ links: 3 }), parameters: chainModel({ links: 3 }).parameters.map((p) => ({ ...p, value: 1 })) };

  it("shows the equations in display form, each displayed term marked for comments", async () => {
    const result = await evaluateDemo("Camera gimbal");
    const [psi] = result.equations;
    expect(psi!.latex).toMatch(/ = 0$/);
    // The demo gimbal's T has I_2 sin²θ + I_3 cos²θ; the equation shows it so.
    expect(psi!.latex).toContain("I_{2}\\,\\sin^{2}\\left(\\theta\\right)");
    for (const term of psi!.terms) expect(psi!.latex).toContain(`\\htmlData{term=${term.id}}{${term.latex}}`);
    // The residual text for the API stays the canonical form.
    expect(psi!.residual).toContain("cos(2*theta)");
  });

  it("shows the engine's accelerations, common factors cancelled", async () => {
    const result = await evaluateDemo("Gantry crane: trolley");
    expect(result.accelerationsNote).toBeUndefined();
    expect(result.accelerations!.map((a) => a.coordinate)).toEqual(["x", "theta"]);
    // (F − b x' + m l θ'² sin θ + m g sin θ cos θ)/(M + m sin²θ): the cart with a hanging load (from memory).
    expect(result.accelerations![0]!.latex).toMatch(/^\\ddot\{x\} = \\frac\{.*\}\{M \+ m\\,\\sin\^\{2\}\\left\(\\theta\\right\)\}$/);
  });

  it("says plainly when there is no closed form for the accelerations", async () => {
    const { result } = await evaluateModel(inProcessRunner, chain3, settings);
    expect(result.accelerations).toBeUndefined();
    expect(result.accelerationsNote).toBe(
      "No closed form for the accelerations: all 3 coordinates are coupled through the mass matrix (a 3×3 block); accelerations are solved symbolically only for blocks up to 2×2. The mass-matrix form and the code export hold the full equations.",
    );
  });

  it("lists one equilibrium per hanging and upright load, the trolley position being free", async () => {
    const result = await evaluateDemo("Gantry crane: trolley");
    // The equations contain x only through x' and x'': every trolley position is an equilibrium.
    expect(result.freeCoordinates).toEqual(["x"]);
    const listed = result.equilibria!.map((e) => e.q);
    expect(listed).toHaveLength(2);
    expect(listed[0]).toEqual([0, 0]);
    expect(listed[1]![0]).toBe(0);
    expect(listed[1]![1]).toBeCloseTo(Math.PI, 9);
  });
});

describe("distinctEquilibria", () => {
  const at = (q: number[]) => ({ q }) as unknown as Equilibrium;

  it("keeps one equilibrium per value of the coordinates that are not free", () => {
    const found = [at([0.5, 0]), at([-2, 1e-12]), at([1.25, Math.PI])];
    expect(distinctEquilibria(["x", "theta"], ["x"], found).map((e) => e.q)).toEqual([
      [0, 0],
      [0, Math.PI],
    ]);
    // With no free coordinate the trolley positions are distinct equilibria.
    expect(distinctEquilibria(["x", "theta"], [], found)).toHaveLength(3);
  });

  it("keeps one member of a family along a rigid mode, the one nearest to zero", () => {
    // Trolley x and load xl move together (rigid mode shape (1, 1, 0)) at rest.
    const member = (q: number[], stability: Equilibrium["stability"] = "marginal") =>
      ({
        q,
        isolated: false,
        stability,
        linearization: { modes: [{ kind: "rigid", shape: [1, 1, 0] }] },
      }) as unknown as Equilibrium;
    const found = [member([-1.5, -1.5, -6.5]), member([0.25, 0.25, -6.5]), member([0.5, 0.5, 6.5], "unstable"), member([1, 0, -6.5])];
    expect(distinctEquilibria(["x", "xl", "yl"], [], found).map((e) => e.q)).toEqual([
      [0.25, 0.25, -6.5],
      [0.5, 0.5, 6.5],
      [1, 0, -6.5],
    ]);
  });
});

describe("models with constraints", () => {
  const atwood: Model = {
    title: "Atwood machine",
    coordinates: [
      { name: "y1", unit: "m" },
      { name: "y2", unit: "m" },
    ],
    parameters: [
      { name: "m1", unit: "kg", value: 1 },
      { name: "m2", unit: "kg", value: 2 },
      { name: "g", unit: "m/s^2", value: 9.81 },
      { name: "L", unit: "m", value: 3 },
    ],
    inputs: [{ name: "F", unit: "N" }],
    kinetic: "m1/2*y1'^2 + m2/2*y2'^2",
    potential: "m1*g*y1 + m2*g*y2",
    forces: { y1: "F" },
    constraints: [{ name: "rope", expr: "y1 + y2 - L" }],
  };
  const derived = {
    coordinates: ["y1", "y2"],
    massMatrix: [
      ["m1", "0"],
      ["0", "m2"],
    ],
    forcing: ["F + lambda_rope - m1*g", "lambda_rope - m2*g"],
  };

  const rope = [{ name: "rope", kind: "position" as const, symbol: "lambda_rope", expr: "y1 + y2 - L" }];

  it("passes position constraints on to the equilibrium search and the linearization", () => {
    expect(mechanicalSystemOf(atwood, { ...derived, constraintRows: rope })).toMatchObject({ constraints: rope, inputs: ["F"] });
    // A result stored without its constraints cannot be relinearized: the reason says what to do.
    expect(mechanicalSystemOf(atwood, derived)).toEqual({ reason: expect.stringMatching(/Evaluate the notebook again/) });
  });

  it("gives the reason instead of equilibria for rate constraints", () => {
    const rolling: Model = { ...atwood, constraints: [], rateConstraints: [{ name: "roll", expr: "y1' - y2'" }] };
    expect(mechanicalSystemOf(rolling, derived)).toEqual({ reason: expect.stringMatching(/rate constraints/) });
  });

  it("exports code with the multipliers as arguments after the inputs", () => {
    expect(codeExportInput(atwood, derived).inputs).toEqual(["F", "lambda_rope"]);
  });
});
