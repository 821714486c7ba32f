import { describe, expect, it } from "vitest";
import { deriveModel } from "@/lib/mechanics/derive";
import type { Model } from "@/lib/mechanics/model";
import { energyDrift } from "@/lib/simulate/checks";
import { dependentConstraint } from "@/lib/simulate/constraints";
import { SimulationSetupError } from "@/lib/simulate/errors";
import { integrate, integrateInSlices } from "@/lib/simulate/integrate";
import { peakOf } from "@/lib/simulate/outputs";
import type { ConstraintSpec, OutputSpec } from "@/lib/simulate/specs";
import { systemFromMassMatrixForm, type MechanicalSystem } from "@/lib/simulate/system";
import { trajectoryCsv } from "@/lib/simulate/trajectory-csv";

/** The system of an unconstrained model with constraints and outputs added. */
function constrainedSystem(model: Model, constraints: ConstraintSpec[], outputs: OutputSpec[] = []): MechanicalSystem {
  const derived = deriveModel(model);
  return systemFromMassMatrixForm({
    coordinates: derived.coordinates,
    inputs: (model.inputs ?? []).map((u) => u.name),
    parameters: model.parameters.map((p) => ({ name: p.name, value: p.value, unit: p.unit })),
    massMatrix: derived.massMatrix,
    forcing: derived.forcing,
    energy: derived.energy,
    energyConserved: derived.conserved.some((c) => c.name === "energy function"),
    constraints,
    outputs,
  });
}

const g = 9.81;
const m = 2;
const l = 1.5;

/** A point mass on a rod of length l, in Cartesian coordinates (y up), held by x² + y² − l² = 0. */
const cartesianPendulum: Model = {
  title: "Cartesian pendulum",
  coordinates: [
    { name: "x", unit: "m" },
    { name: "y", unit: "m" },
  ],
  parameters: [
    { name: "m", unit: "kg", value: m },
    { name: "l", unit: "m", value: l },
    { name: "g", unit: "m/s^2", value: g },
  ],
  kinetic: "1/2*m*(x'^2 + y'^2)",
  potential: "m*g*y",
};
const rod: ConstraintSpec = { name: "rod", kind: "position", expr: "x^2 + y^2 - l^2" };
// With g = x² + y² − l², the rod's pull on the mass is λ ∂g/∂(x, y) = 2λ(x, y): along the rod, of size 2|λ| l, inwards for λ < 0.
const tension: OutputSpec = { name: "tension", expr: "-2*lambda_rod*l", unit: "N" };

const anglePendulum: Model = {
  title: "Pendulum",
  coordinates: [{ name: "theta", unit: "rad" }],
  parameters: cartesianPendulum.parameters,
  kinetic: "1/2*m*l^2*theta'^2",
  potential: "-m*g*l*cos(theta)",
};

describe("constrained simulation: the pendulum written in Cartesian coordinates", () => {
  const theta0 = 0.9;
  const run = () =>
    integrate(constrainedSystem(cartesianPendulum, [rod], [tension]), {
      initialCoordinates: { x: l * Math.sin(theta0), y: -l * Math.cos(theta0) },
      endTime: 5,
      outputStep: 0.01,
    });

  it("moves as the angle form does, and its multiplier gives the rod tension m g cos θ + m l θ'²", () => {
    const cartesian = run();
    const angle = integrate(constrainedSystem(anglePendulum, []), { initialCoordinates: { theta: theta0 }, endTime: 5, outputStep: 0.01 });
    expect(cartesian.status).toBe("completed");
    expect(cartesian.constraints!.initialProjection).toBeNull();
    const [x, y] = cartesian.trajectory.coordinates;
    const theta = angle.trajectory.coordinates[0]!;
    const rate = angle.trajectory.rates[0]!;
    let worstPosition = 0;
    let worstTension = 0;
    for (let k = 0; k < theta.length; k++) {
      worstPosition = Math.max(worstPosition, Math.abs(x![k]! - l * Math.sin(theta[k]!)), Math.abs(y![k]! + l * Math.cos(theta[k]!)));
      // Tension of a pendulum string, T = m g cos θ + m l θ'² (radial equation of motion; from memory, any dynamics text).
      const expected = m * g * Math.cos(theta[k]!) + m * l * rate[k]! ** 2;
      worstTension = Math.max(worstTension, Math.abs(cartesian.outputs[0]!.values[k]! - expected));
    }
    // Both runs at the default tolerance 1e-8: the same motion to well within 1e-6 m over 5 s.
    expect(worstPosition).toBeLessThan(1e-6);
    expect(worstTension).toBeLessThan(1e-5 * m * g);
    expect(cartesian.constraints!.maxResidual[0]).toBeLessThan(1e-10);
  });

  it("keeps the energy function constant: the rod does no work (fact of the trade)", () => {
    const result = run();
    expect(energyDrift(result.energy!).relativeDrift).toBeLessThan(1e-6);
  });

  it("reports the peak tension and when it occurs", () => {
    const result = run();
    const peak = result.outputs[0]!.peak!;
    // The tension is largest at the bottom of the swing, where θ = 0:
    // T = m g (3 − 2 cos θ0) from energy conservation (from memory, any dynamics text).
    expect(peak.value).toBeCloseTo(m * g * (3 - 2 * Math.cos(theta0)), 2);
    const k = Array.from(result.trajectory.times).indexOf(peak.time);
    expect(Math.abs(result.trajectory.coordinates[0]![k]!)).toBeLessThan(0.02 * l);
  });

  it("projects an initial state off the rod onto it and says what it changed", () => {
    const result = integrate(constrainedSystem(cartesianPendulum, [rod]), {
      initialCoordinates: { x: 0.3, y: -0.5 },
      initialRates: { x: 1, y: 1 },
      endTime: 1,
      outputStep: 0.01,
    });
    expect(result.status).toBe("completed");
    const projection = result.constraints!.initialProjection!;
    expect(projection).not.toBeNull();
    expect(projection.residuals).toEqual([{ name: "rod", kind: "position", given: 0.3 ** 2 + 0.5 ** 2 - l ** 2 }]);
    expect(projection.coordinates.map((c) => c.name).sort()).toEqual(["x", "y"]);
    const [x0, y0] = [result.trajectory.coordinates[0]![0]!, result.trajectory.coordinates[1]![0]!];
    expect(Math.hypot(x0, y0)).toBeCloseTo(l, 12);
    // The rates are made tangent to the circle: x x' + y y' = 0.
    expect(x0 * result.trajectory.rates[0]![0]! + y0 * result.trajectory.rates[1]![0]!).toBeCloseTo(0, 12);
    expect(projection.rates.length).toBeGreaterThan(0);
  });

  it("stops with an error naming the constraint when two constraints are the same", () => {
    const twice: ConstraintSpec = { name: "rod_again", kind: "position", expr: "2*(x^2 + y^2 - l^2)" };
    const attempt = () => integrate(constrainedSystem(cartesianPendulum, [rod, twice]), { initialCoordinates: { x: 0, y: -l }, endTime: 1, outputStep: 0.1 });
    expect(attempt).toThrow(SimulationSetupError);
    try {
      attempt();
    } catch (error) {
      expect((error as SimulationSetupError).code).toBe("constraint");
      expect((error as SimulationSetupError).field).toBe("constraints.rod_again");
      expect((error as SimulationSetupError).message).toMatch(/rod_again.*not independent of "rod"/);
    }
  });

  it("stops with an error naming the constraint when the constraints have no common solution", () => {
    const wall: ConstraintSpec = { name: "wall", kind: "position", expr: "x - 2*l" };
    try {
      integrate(constrainedSystem(cartesianPendulum, [rod, wall]), { initialCoordinates: { x: 0, y: -l }, endTime: 1, outputStep: 0.1 });
      expect.unreachable("the run should have been refused");
    } catch (error) {
      expect(error).toBeInstanceOf(SimulationSetupError);
      expect((error as SimulationSetupError).code).toBe("constraint");
      expect((error as SimulationSetupError).field).toMatch(/^constraints\.(rod|wall)$/);
      expect((error as SimulationSetupError).message).toMatch(/cannot be brought onto the constraint/);
    }
  });

  it("refuses a position constraint that holds a rate, naming it", () => {
    const bad: ConstraintSpec = { name: "slip", kind: "position", expr: "x' - y" };
    expect(() => integrate(constrainedSystem(cartesianPendulum, [bad]), { initialCoordinates: { x: 0, y: -l }, endTime: 1, outputStep: 0.1 })).toThrow(
      /position constraint "slip" holds the rate x'/,
    );
  });
});

/**
 * A four-bar linkage: crank (a) pinned at the origin, coupler (b), rocker (c)
 * pinned at (d, 0); three angles from the x axis and two loop-closure
 * constraints. Uniform bars; the coupler's centre is at the crank tip plus half the coupler.
 */
const fourBar: Model = {
  title: "Four-bar linkage",
  coordinates: [
    { name: "th1", unit: "rad" },
    { name: "th2", unit: "rad" },
    { name: "th3", unit: "rad" },
  ],
  parameters: [
    { name: "a", unit: "m", value: 0.3 },
    { name: "b", unit: "m", value: 0.8 },
    { name: "c", unit: "m", value: 0.6 },
    { name: "d", unit: "m", value: 0.7 },
    { name: "m1", unit: "kg", value: 1 },
    { name: "m2", unit: "kg", value: 2.5 },
    { name: "m3", unit: "kg", value: 1.8 },
    { name: "g", unit: "m/s^2", value: g },
  ],
  kinetic:
    "1/6*m1*a^2*th1'^2 + 1/2*m2*((-a*sin(th1)*th1' - b/2*sin(th2)*th2')^2 + (a*cos(th1)*th1' + b/2*cos(th2)*th2')^2) + 1/24*m2*b^2*th2'^2 + 1/6*m3*c^2*th3'^2",
  potential: "m1*g*a/2*sin(th1) + m2*g*(a*sin(th1) + b/2*sin(th2)) + m3*g*c/2*sin(th3)",
};
const loop: ConstraintSpec[] = [
  { name: "loop_x", kind: "position", expr: "a*cos(th1) + b*cos(th2) - c*cos(th3) - d" },
  { name: "loop_y", kind: "position", expr: "a*sin(th1) + b*sin(th2) - c*sin(th3)" },
];

/** A consistent assembly of the four-bar for a crank angle: the coupler and rocker angles by the law of cosines. */
function assembled(th1: number) {
  const { a, b, c, d } = { a: 0.3, b: 0.8, c: 0.6, d: 0.7 };
  const [px, py] = [a * Math.cos(th1), a * Math.sin(th1)];
  const [ex, ey] = [d - px, -py];
  const e = Math.hypot(ex, ey);
  const base = Math.atan2(ey, ex);
  const gamma = Math.acos((b * b + e * e - c * c) / (2 * b * e));
  const th2 = base + gamma;
  const [jx, jy] = [px + b * Math.cos(th2), py + b * Math.sin(th2)];
  const th3 = Math.atan2(jy, jx - d);
  return { th1, th2, th3 };
}

describe("constrained simulation: a four-bar linkage", () => {
  it("holds its loop closure to 1e-8 over a 10 s run, with the energy function constant", async () => {
    const system = constrainedSystem(fourBar, loop, [{ name: "pin_x", expr: "-lambda_loop_x", unit: "N" }]);
    const start = assembled(1.2);
    const result = await integrateInSlices(system, { initialCoordinates: start, initialRates: { th1: 4 }, endTime: 10, outputStep: 0.01 });
    expect(result.status).toBe("completed");
    expect(result.timeReached).toBe(10);
    const report = result.constraints!;
    // Positions were consistent; only the rates were made to fit the loop.
    expect(report.initialProjection!.coordinates).toEqual([]);
    // The loop closure at every output point, against the 1e-8 asked of the issue (our own requirement).
    for (const column of report.residuals) for (const value of column) expect(Math.abs(value)).toBeLessThan(1e-8);
    expect(Math.max(...report.maxResidual)).toBeLessThan(1e-8);
    // Gravity and loop forces that do no work: the energy function is a constant of the motion (fact of the trade).
    expect(energyDrift(result.energy!).relativeDrift).toBeLessThan(1e-6);
    // The crank turns all the way round (a Grashof crank-rocker: s + l = 0.3 + 0.8 ≤ p + q = 0.6 + 0.7, from memory).
    const th1 = result.trajectory.coordinates[0]!;
    expect(th1[th1.length - 1]! - th1[0]!).toBeGreaterThan(2 * Math.PI);
    expect(result.outputs[0]!.values.every(Number.isFinite)).toBe(true);
  });

  it("writes the outputs and the multipliers into the trajectory CSV", () => {
    const system = constrainedSystem(fourBar, loop, [{ name: "pin_x", expr: "-lambda_loop_x", unit: "N" }]);
    const result = integrate(system, { initialCoordinates: assembled(1.2), endTime: 0.2, outputStep: 0.1 });
    const csv = trajectoryCsv(
      { ...result.trajectory, energy: result.energy, outputs: result.outputs, constraints: result.constraints },
      { th1: "rad", th2: "rad", th3: "rad" },
    );
    const [header, first] = csv.split("\n");
    expect(header).toContain("pin_x [N]");
    expect(header).toContain("lambda_loop_x");
    expect(header).toContain("lambda_loop_y");
    expect(header).toContain("residual loop_x [1]");
    const cells = first!.split(",");
    expect(cells).toHaveLength(header!.split(",").length);
    const column = header!.split(",").findIndex((h) => h.startsWith("pin_x"));
    expect(Number(cells[column])).toBeCloseTo(result.outputs[0]!.values[0]!, 12);
  });
});

describe("constrained simulation: a rate constraint", () => {
  // A hoop of mass M and radius R rolling without slipping down an incline at φ: x along the slope, θ its turn; x' − R θ' = 0.
  const hoop: Model = {
    title: "Hoop on an incline",
    coordinates: [
      { name: "x", unit: "m" },
      { name: "theta", unit: "rad" },
    ],
    parameters: [
      { name: "M", unit: "kg", value: 3 },
      { name: "R", unit: "m", value: 0.4 },
      { name: "phi", unit: "rad", value: 0.3 },
      { name: "g", unit: "m/s^2", value: g },
    ],
    kinetic: "1/2*M*x'^2 + 1/2*M*R^2*theta'^2",
    potential: "-M*g*x*sin(phi)",
  };
  it("rolls with acceleration g sin φ / 2 and friction M g sin φ / 2", () => {
    const system = constrainedSystem(hoop, [{ name: "roll", kind: "rate", expr: "x' - R*theta'" }], [{ name: "friction", expr: "-mu_roll", unit: "N" }]);
    const result = integrate(system, { initialCoordinates: {}, endTime: 2, outputStep: 0.5 });
    expect(result.status).toBe("completed");
    const x = result.trajectory.coordinates[0]!;
    const end = x.length - 1;
    // Goldstein, Poole and Safko, Classical Mechanics, 3rd ed., §2.4: the hoop's acceleration is g sin φ / 2.
    expect(x[end]!).toBeCloseTo(0.5 * ((g * Math.sin(0.3)) / 2) * 4, 8);
    // Same section: the friction force is M g sin φ / 2 (the multiplier of the rolling constraint, up to sign).
    for (const value of result.outputs[0]!.values) expect(value).toBeCloseTo((3 * g * Math.sin(0.3)) / 2, 8);
  });
});

describe("dependentConstraint and peakOf", () => {
  it("names the first row that adds nothing to the rows before it", () => {
    const rows = Float64Array.from([1, 0, 0, 0, 1, 0, 1, 1, 0]);
    expect(dependentConstraint(rows, ["a", "b", "c"], 3)?.constraint).toBe("c");
    expect(dependentConstraint(Float64Array.from([1, 0, 0, 0, 1, 0]), ["a", "b"], 3)).toBeNull();
    expect(dependentConstraint(Float64Array.from([0, 0, 0]), ["z"], 3)?.message).toMatch(/does not depend on the coordinates/);
  });
  it("finds the value of largest magnitude with its sign and time", () => {
    expect(peakOf([0, 1, 2], [0.5, -3, 2])).toEqual({ value: -3, time: 1 });
    expect(peakOf([], [])).toBeNull();
  });
});

describe("the demo crane's rope tension (db/seed/demo.ts)", () => {
  it("peaks at m g [1 + 2(1 − cos θ0)(1 + m/M)] at the bottom of the first swing with the trolley free", async () => {
    const { demoDerivations } = await import("@/db/seed/demo");
    const { documentToModel, parseStoredDocument } = await import("@/lib/notebook/document");
    const { validateModel } = await import("@/lib/mechanics/validate-model");
    const { massMatrixFormOf } = await import("@/lib/simulate/system");
    const stored = demoDerivations.find((d) => d.title.includes("rope tension"))!;
    const parsed = parseStoredDocument(stored.content);
    if (!parsed.ok) throw new Error("the demo document does not read");
    const model = validateModel(documentToModel(parsed.document));
    const system = systemFromMassMatrixForm(massMatrixFormOf(model, deriveModel(model)));
    const [M, mass, length, gravity] = ["M", "m", "l", "g"].map((name) => model.parameters.find((p) => p.name === name)!.value!);
    const theta0 = 0.15;
    const result = integrate(system, {
      initialCoordinates: { x: 0, xl: length! * Math.sin(theta0), yl: -length! * Math.cos(theta0) },
      parameters: { b: 0 },
      endTime: 2,
      outputStep: 0.001,
    });
    expect(result.status).toBe("completed");
    const tension = result.outputs.find((o) => o.name === "rope_tension")!;
    // In the trolley's frame the trolley does not accelerate when the rope is vertical, so T = m g + m v_rel²/l;
    // momentum and energy give v_rel² = 2 g l (1 − cos θ0)(1 + m/M). Derived from memory (two-body pendulum on a free cart).
    const expected = mass! * gravity! * (1 + 2 * (1 - Math.cos(theta0)) * (1 + mass! / M!));
    expect(Math.abs(tension.peak!.value - expected) / expected).toBeLessThan(1e-5);
    // The first bottom of the swing comes a quarter period in: 2π/ω/4 with ω² = (g/l)(1 + m/M) (from memory, same system).
    const quarter = (Math.PI / 2) * Math.sqrt(length! / (gravity! * (1 + mass! / M!)));
    expect(Math.abs(tension.peak!.time - quarter)).toBeLessThan(0.02);
  });
});
