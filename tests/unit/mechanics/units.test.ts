import { describe, expect, it } from "vitest";
import { ModelError } from "@/lib/mechanics/errors";
import type { Model } from "@/lib/mechanics/model";
import { checkModelUnits, DIMENSIONLESS, ENERGY, formatDimension, isAngleUnit, parseUnit, unitOfExpression } from "@/lib/mechanics/units";
import { modelToDocument } from "@/lib/notebook/document";
import { locateDiagnostics, toEditorDiagnostic } from "@/lib/notebook/results";

function modelError(run: () => void): ModelError {
  try {
    run();
  } catch (error) {
    expect(error).toBeInstanceOf(ModelError);
    return error as ModelError;
  }
  throw new Error("expected a ModelError");
}

// Crane trolley with a hanging load (our demo scenario): the double-pendulum-like
// Cartesian construction the engine sees in practice.
const trolley = (): Model => ({
  title: "Gantry trolley with hanging load",
  coordinates: [
    { name: "x", unit: "m" },
    { name: "theta", unit: "rad" },
  ],
  parameters: [
    { name: "M", unit: "kg", value: 120 },
    { name: "m", unit: "kg", value: 800 },
    { name: "l", unit: "m", value: 6 },
    { name: "g", unit: "m/s^2", value: 9.81 },
    { name: "c", unit: "N*s/m", value: 40 },
    { name: "ct", unit: "N*m*s/rad", value: 5 },
    { name: "w", unit: "rad/s", value: 2 },
  ],
  inputs: [
    { name: "F", unit: "N" },
    { name: "tau", unit: "N*m" },
  ],
  definitions: [
    { name: "xl", expr: "x + l*sin(theta)" },
    { name: "yl", expr: "-l*cos(theta)" },
  ],
  kinetic: "1/2*M*x'^2 + 1/2*m*(xl'^2 + yl'^2)",
  potential: "m*g*yl",
  dissipation: "1/2*c*x'^2 + 1/2*ct*theta'^2",
  forces: { x: "F*cos(w*t)", theta: "tau" },
});

describe("parseUnit", () => {
  it("reads the SI symbols of the model file and treats rad as dimensionless", () => {
    expect(parseUnit("kg")).toEqual([1, 0, 0, 0, 0, 0, 0]);
    expect(parseUnit("N*m")).toEqual(ENERGY);
    expect(parseUnit("J/rad")).toEqual(ENERGY);
    expect(parseUnit("kg*m^2/s^2")).toEqual(ENERGY);
    expect(parseUnit("W")).toEqual([1, 2, -3, 0, 0, 0, 0]);
    expect(parseUnit("Pa")).toEqual([1, -1, -2, 0, 0, 0, 0]);
    expect(parseUnit("Hz")).toEqual([0, 0, -1, 0, 0, 0, 0]);
    expect(parseUnit("1/s")).toEqual([0, 0, -1, 0, 0, 0, 0]);
    expect(parseUnit("rad")).toEqual(DIMENSIONLESS);
    expect(parseUnit("1")).toEqual(DIMENSIONLESS);
    expect(isAngleUnit("rad")).toBe(true);
    expect(isAngleUnit("m")).toBe(false);
  });

  it("refuses units outside the list, and unreadable text, naming the field", () => {
    const unknown = modelError(() => parseUnit("ft", "parameters[2].unit"));
    expect(unknown.code).toBe("unit");
    expect(unknown.field).toBe("parameters[2].unit");
    expect(modelError(() => parseUnit("km", "parameters[0].unit")).message).toMatch(/km/);
    expect(modelError(() => parseUnit("kg*blorp", "inputs[0].unit")).column).toBe(4);
    expect(modelError(() => parseUnit("kg;rm", "x")).code).toBe("unit");
    expect(modelError(() => parseUnit("m^", "x")).code).toBe("unit");
  });

  it("formats dimensions over base symbols with their names", () => {
    expect(formatDimension(ENERGY)).toBe("kg*m^2/s^2 (J)");
    expect(formatDimension([0, 1, -1, 0, 0, 0, 0])).toBe("m/s");
    expect(formatDimension(DIMENSIONLESS)).toBe("1");
  });
});

describe("unitOfExpression", () => {
  it("gives rates unit/s and accelerations unit/s²", () => {
    expect(unitOfExpression("x'", { x: "m" })).toEqual([0, 1, -1, 0, 0, 0, 0]);
    expect(unitOfExpression("m*x''", { x: "m", m: "kg" })).toEqual([1, 1, -2, 0, 0, 0, 0]);
    expect(unitOfExpression("1/2*J*theta'^2", { J: "kg*m^2", theta: "rad" })).toEqual(ENERGY);
    expect(unitOfExpression("sqrt(k/m)", { k: "N/m", m: "kg" })).toEqual([0, 0, -1, 0, 0, 0, 0]);
    expect(unitOfExpression("0", {})).toBeNull();
  });

  it("names both terms of a sum that disagree, with the column of the offender", () => {
    const error = modelError(() => unitOfExpression("m*g + k", { m: "kg", g: "m/s^2", k: "N/m" }, "potential"));
    expect(error.code).toBe("unit_mismatch");
    expect(error.field).toBe("potential");
    expect(error.column).toBe(7);
    expect(error.message).toContain('"k"');
    expect(error.message).toContain('"m*g"');
    expect(error.message).toContain("kg/s^2");
    expect(error.message).toContain("kg*m/s^2 (N)");
  });

  it("blames the term that disagrees with most of the others, wherever it stands", () => {
    const units = { a: "m", b: "kg", c: "m" };
    const last = modelError(() => unitOfExpression("a + c + b", units));
    expect([last.column, last.length]).toEqual([9, 1]);
    // The odd term first: the two that agree set the unit, so "b" is underlined, not "c".
    const first = modelError(() => unitOfExpression("b + a + c", units));
    expect([first.column, first.length]).toEqual([1, 1]);
    expect(first.message).toBe('the term "b" has unit kg but "a" has unit m');
    // Inside a product too: (x − l) with a mass l.
    const inner = modelError(() => unitOfExpression("k*(l + x + y)^2", { k: "N/m", x: "m", y: "m", l: "kg" }));
    expect(inner.column).toBe(4);
  });

  it("requires dimensionless arguments of functions and exponents", () => {
    const error = modelError(() => unitOfExpression("A*sin(l)", { A: "m", l: "m" }, "kinetic"));
    expect(error.message).toMatch(/argument "l" of sin has unit m/);
    expect(error.column).toBe(7);
    expect(unitOfExpression("exp(-c*t/m)", { c: "N*s/m", m: "kg" })).toEqual(DIMENSIONLESS);
    expect(modelError(() => unitOfExpression("x^x", { x: "m" })).code).toBe("unit_mismatch");
    expect(modelError(() => unitOfExpression("2^l", { l: "m" })).message).toMatch(/exponent/);
  });
});

describe("checkModelUnits", () => {
  it("accepts a consistent model, inferring units of definitions", () => {
    expect(() => checkModelUnits(trolley())).not.toThrow();
  });

  it("reports a kinetic energy term that is not an energy", () => {
    const model = { ...trolley(), kinetic: "1/2*M*x'^2 + 1/2*m*xl'" };
    const error = modelError(() => checkModelUnits(model));
    expect(error.field).toBe("kinetic");
    expect(error.code).toBe("unit_mismatch");
    expect(error.column).toBe(14);
    expect(error.message).toContain('"1/2*m*xl\'"');
  });

  it("underlines the term that is not an energy, even when it comes first", () => {
    // ½·kc·x is a force (N) where the potential needs J; ½·k·(r − r0)² is an energy and stays unmarked.
    const model: Model = {
      title: "Sprung carriage with a preloaded buffer",
      coordinates: [
        { name: "x", unit: "m" },
        { name: "r", unit: "m" },
      ],
      parameters: [
        { name: "m", unit: "kg", value: 40 },
        { name: "kc", unit: "N/m", value: 900 },
        { name: "k", unit: "N/m", value: 2500 },
        { name: "r0", unit: "m", value: 0.2 },
      ],
      kinetic: "1/2*m*x'^2 + 1/2*m*r'^2",
      potential: "1/2*kc*x + 1/2*k*(r-r0)^2",
    };
    const error = modelError(() => checkModelUnits(model));
    expect(error.field).toBe("potential");
    expect([error.column, error.length]).toEqual([1, 8]);
    expect(error.message).toBe('the term "1/2*kc*x" of the potential energy has unit kg*m/s^2 (N) but must have kg*m^2/s^2 (J)');
    // What the potential cell's editor underlines.
    const doc = modelToDocument(
      model,
      (() => {
        let n = 0;
        return () => `c${++n}`;
      })(),
    );
    const { byCell } = locateDiagnostics(doc, [error.toJSON()], model);
    const [located] = [...byCell.values()][0]!;
    const range = toEditorDiagnostic(located!, model.potential);
    expect(model.potential.slice(range.from, range.to)).toBe("1/2*kc*x");
  });

  it("reports a dissipation function that is not a power", () => {
    const model = { ...trolley(), dissipation: "1/2*c*x^2" };
    const error = modelError(() => checkModelUnits(model));
    expect(error.field).toBe("dissipation");
    expect(error.message).toMatch(/must have kg\*m\^2\/s\^3 \(W\)/);
  });

  it("wants N*m (J per rad) as the generalized force of an angle and N for a length", () => {
    const bad = { ...trolley(), forces: { x: "F", theta: "F" } };
    const error = modelError(() => checkModelUnits(bad));
    expect(error.field).toBe("forces.theta");
    expect(error.column).toBe(1);
    expect(modelError(() => checkModelUnits({ ...trolley(), forces: { x: "tau" } })).field).toBe("forces.x");
  });

  it("reports a bad unit with its field path", () => {
    const model = trolley();
    model.parameters[2] = { name: "l", unit: "furlong", value: 6 };
    const error = modelError(() => checkModelUnits(model));
    expect(error.code).toBe("unit");
    expect(error.field).toBe("parameters[2].unit");
  });

  it("checks every top-level term of a residual against the coordinate's generalized force", () => {
    // Trolley equations written out by hand (Lagrange's equations of the model above).
    const good = [
      { coordinate: "x", residual: "(M + m)*x'' + m*l*cos(theta)*theta'' - m*l*theta'^2*sin(theta) + c*x' - F*cos(w*t)" },
      { coordinate: "theta", residual: "m*l^2*theta'' + m*l*cos(theta)*x'' + m*g*l*sin(theta) + ct*theta' - tau" },
    ];
    expect(() => checkModelUnits(trolley(), good)).not.toThrow();
    const bad = [good[0]!, { coordinate: "theta", residual: "m*l^2*theta'' + m*l*cos(theta)*x'' + m*g*sin(theta)" }];
    const error = modelError(() => checkModelUnits(trolley(), bad));
    expect(error.field).toBe("equations[1].residual");
    expect(error.message).toContain('"m*g*sin(theta)"');
    expect(error.message).toContain("kg*m/s^2 (N)");
    expect(error.column).toBeNull();
  });
});
