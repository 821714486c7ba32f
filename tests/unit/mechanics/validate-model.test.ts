import { describe, expect, it } from "vitest";
import { ModelError } from "@/lib/mechanics/errors";
import type { Model } from "@/lib/mechanics/model";
import { analyzeModel, validateModel } from "@/lib/mechanics/validate-model";
import { chainModel } from "@/lib/mechanics/templates/chain";

const base = (): Model => ({
  title: "Trolley with hanging load",
  coordinates: [
    { name: "x", unit: "m" },
    { name: "phi", unit: "rad" },
  ],
  parameters: [
    { name: "M", unit: "kg", value: 10 },
    { name: "m", unit: "kg" },
    { name: "l", unit: "m", value: 2 },
    { name: "g", unit: "m/s^2", value: 9.81 },
  ],
  inputs: [{ name: "F", unit: "N" }],
  definitions: [
    { name: "xl", expr: "x + l*sin(phi)" },
    { name: "yl", expr: "-l*cos(phi)" },
  ],
  kinetic: "1/2*M*x'^2 + 1/2*m*(xl'^2 + yl'^2)",
  potential: "m*g*yl",
  forces: { x: "F" },
});

function errorOf(input: unknown): ModelError {
  try {
    validateModel(input);
  } catch (error) {
    if (error instanceof ModelError) return error;
    throw error;
  }
  throw new Error("expected a ModelError");
}

describe("validateModel", () => {
  it("accepts a well-formed model and keeps optional fields absent", () => {
    const model = validateModel(JSON.parse(JSON.stringify(base())));
    expect(model.parameters[1]).toEqual({ name: "m", unit: "kg" });
    expect(model.dissipation).toBeUndefined();
    expect(model.definitions).toHaveLength(2);
  });

  it("reports schema problems by field path", () => {
    const e = errorOf({ ...base(), coordinates: [{ name: "x" }] });
    expect(e.code).toBe("schema");
    expect(e.field).toBe("coordinates[0].unit");
    expect(errorOf({ ...base(), kinetic: 3 }).field).toBe("kinetic");
    expect(errorOf([]).code).toBe("schema");
  });

  it("reports a parse error with its column", () => {
    const e = errorOf({ ...base(), potential: "m*g*(yl" });
    expect([e.code, e.field, e.column]).toEqual(["parse", "potential", 8]);
    expect(e.toLine()).toBe('potential, column 8: expected ")" to close the "(" at column 5');
  });

  it("reports an unknown symbol with its column", () => {
    const e = errorOf({
      ...base(),
      definitions: [
        { name: "xl", expr: "x + l*sin(phi)" },
        { name: "yl", expr: "-l2*cos(phi)" },
      ],
    });
    expect([e.code, e.field, e.column, e.length]).toEqual(["unknown_symbol", "definitions[1].expr", 2, 2]);
  });

  it("refuses the rate of a parameter or an input", () => {
    const e = errorOf({ ...base(), kinetic: "1/2*M*x'^2 + m'" });
    expect([e.code, e.field, e.column]).toEqual(["rate_of_parameter", "kinetic", 14]);
    expect(errorOf({ ...base(), forces: { x: "F'" } }).code).toBe("rate_of_parameter");
    expect(errorOf({ ...base(), potential: "m*g*yl*t'" }).code).toBe("rate_of_parameter");
  });

  it("names the cycle of circular definitions", () => {
    const e = errorOf({
      ...base(),
      definitions: [
        { name: "xl", expr: "x + l*sin(phi) + 0*yl" },
        { name: "yl", expr: "-l*cos(phi) + 0*zl" },
        { name: "zl", expr: "xl" },
      ],
    });
    expect(e.code).toBe("circular_definition");
    expect(e.message).toBe("circular definition: xl → yl → zl → xl");
    expect([e.field, e.column]).toEqual(["definitions[2].expr", 1]);
  });

  it("orders definitions that refer to later ones", () => {
    const analysis = analyzeModel({
      ...base(),
      definitions: [
        { name: "a", expr: "b + x" },
        { name: "b", expr: "l*phi" },
      ],
      kinetic: "1/2*m*a'^2",
      potential: "m*g*l*cos(phi)",
    });
    expect(analysis.definitionOrder).toEqual([1, 0]);
  });

  it("refuses duplicate and reserved names", () => {
    expect(errorOf({ ...base(), parameters: [...base().parameters, { name: "x", unit: "m" }] })).toMatchObject({
      code: "duplicate_name",
      field: "parameters[4].name",
    });
    expect(errorOf({ ...base(), parameters: [{ name: "t", unit: "s" }] })).toMatchObject({ code: "reserved_name", field: "parameters[0].name" });
    expect(errorOf({ ...base(), definitions: [{ name: "sin", expr: "x" }] })).toMatchObject({ code: "reserved_name" });
  });

  it("refuses forces on unknown coordinates and accelerations in the energies", () => {
    expect(errorOf({ ...base(), forces: { y: "F" } })).toMatchObject({ code: "unknown_symbol", field: "forces.y" });
    expect(errorOf({ ...base(), kinetic: "1/2*M*x'^2 + M*x*x''" })).toMatchObject({ code: "unsupported", field: "kinetic", column: 18 });
    expect(errorOf({ ...base(), definitions: [...base().definitions!, { name: "v", expr: "l*phi'" }], potential: "m*g*yl + m*l*v'" })).toMatchObject({
      code: "unsupported",
      field: "potential",
      column: 14,
    });
  });

  it("refuses oversized models before parsing their expressions", () => {
    const big = chainModel({ links: 31 });
    expect(errorOf(big)).toMatchObject({ code: "too_large", field: "coordinates" });
    const long = { ...base(), kinetic: "x".repeat(100_001) };
    expect(errorOf(long)).toMatchObject({ code: "too_large", field: "model" });
    const many = { ...base(), definitions: Array.from({ length: 201 }, (_, i) => ({ name: `d${i}`, expr: "x" })) };
    expect(errorOf(many)).toMatchObject({ code: "too_large", field: "definitions" });
  });
});
