import { describe, expect, it } from "vitest";
import { StudySettingsError, outputTimesOf, parseGridValues, parseStudy } from "@/lib/study";
import { parameter, ropePendulum, settings } from "./fixtures";

function fieldErrorsOf(run: () => unknown): Record<string, string[]> {
  try {
    run();
  } catch (error) {
    if (error instanceof StudySettingsError) return error.fieldErrors;
    throw error;
  }
  throw new Error("expected a StudySettingsError");
}

describe("parseGridValues", () => {
  it("reads a list and a range with both ends included", () => {
    expect(parseGridValues("0.5, 1, 2")).toEqual({ values: [0.5, 1, 2] });
    expect(parseGridValues("0.5:2:4")).toEqual({ values: [0.5, 1, 1.5, 2] });
    expect(parseGridValues("3:1:3")).toEqual({ values: [3, 2, 1] });
    expect(parseGridValues("7:7:1")).toEqual({ values: [7] });
  });

  it("refuses what is not a list or a range", () => {
    expect(parseGridValues("")).toHaveProperty("error");
    expect(parseGridValues("1, two")).toEqual({ error: '"two" is not a number.' });
    expect(parseGridValues("1, 1")).toEqual({ error: "1 is listed twice." });
    expect(parseGridValues("0:1:2.5")).toEqual({ error: "The count of a range must be a whole number." });
    expect(parseGridValues("1:1:3")).toEqual({ error: "The ends of a range must differ." });
    expect(parseGridValues("0:1")).toHaveProperty("error");
  });

  it("refuses a range whose ends are too far apart to step between (the steps would be infinite)", () => {
    expect(parseGridValues("-1e308:1e308:5")).toEqual({ error: "The ends of the range are too far apart to step between." });
    // Far apart but within reach: every value finite.
    const wide = parseGridValues("-1e307:1e307:3");
    expect(wide).toEqual({ values: [-1e307, 0, 1e307] });
  });
});

describe("outputTimesOf", () => {
  it("steps from the start and always ends at the end time", () => {
    expect(outputTimesOf({ startTime: 0, endTime: 1, outputStep: 0.25 })).toEqual([0, 0.25, 0.5, 0.75, 1]);
    expect(outputTimesOf({ startTime: 0, endTime: 1, outputStep: 0.4 })).toEqual([0, 0.4, 0.8, 1]);
    const fine = outputTimesOf({ startTime: 0, endTime: 10, outputStep: 0.01 });
    expect(fine).toHaveLength(1001);
    expect(fine[1000]).toBe(10);
  });
});

describe("parseStudy", () => {
  it("reads a grid: the product of the value counts times the cases", () => {
    const spec = parseStudy(
      settings({
        parameters: [parameter({ name: "l", values: "1, 2, 3" }), parameter({ name: "m", values: "5:10:2" })],
        cases: [
          { name: "at rest", initialCoordinates: { x: "0.5", y: "-1.9" }, initialRates: {}, inputs: {} },
          { name: "pushed", initialCoordinates: { x: "0", y: "-2" }, initialRates: { x: "1" }, inputs: { F: "10*sin(2*t)*m" } },
        ],
        watch: ["tension", "lambda_rope", "x"],
      }),
      ropePendulum,
    );
    expect(spec.samples).toBe(6);
    expect(spec.runCount).toBe(12);
    expect(spec.parameters).toEqual([
      { name: "l", unit: "m", grid: [1, 2, 3] },
      { name: "m", unit: "kg", grid: [5, 10] },
    ]);
    expect(spec.cases[1]).toEqual({ name: "pushed", initialCoordinates: { x: 0, y: -2 }, initialRates: { x: 1 }, inputs: { F: "10*sin(2*t)*m" } });
    expect(spec.watch).toEqual([
      { name: "tension", unit: "N", kind: "output" },
      { name: "lambda_rope", unit: null, kind: "multiplier" },
      { name: "x", unit: "m", kind: "coordinate" },
    ]);
    expect(spec).toMatchObject({ startTime: 0, endTime: 10, outputStep: 0.01, tolerance: 1e-8 });
  });

  it("reads a tolerance run with its distributions, samples and seed", () => {
    const spec = parseStudy(
      settings({
        mode: "tolerance",
        samples: "200",
        seed: "42",
        parameters: [
          parameter({ name: "l", distribution: "uniform", min: "1.9", max: "2.1" }),
          parameter({ name: "m", distribution: "normal", mean: "10", sd: "0.5", min: "9", max: "11" }),
        ],
        watch: ["tension"],
      }),
      ropePendulum,
    );
    expect(spec).toMatchObject({ mode: "tolerance", samples: 200, seed: 42, runCount: 200 });
    expect(spec.parameters[1]).toEqual({ name: "m", unit: "kg", distribution: "normal", mean: 10, sd: 0.5, min: 9, max: 11 });
  });

  it("names every bad field by its path", () => {
    const errors = fieldErrorsOf(() =>
      parseStudy(
        settings({
          mode: "tolerance",
          samples: "0",
          seed: "-1",
          parameters: [
            parameter({ name: "k" }),
            parameter({ name: "l", distribution: "uniform", min: "2", max: "1" }),
            parameter({ name: "m", distribution: "normal", mean: "20", sd: "0", min: "9", max: "11" }),
          ],
          cases: [
            { name: "a", initialCoordinates: { theta: "1", x: "one" }, initialRates: {}, inputs: { F: "sin(", G: "1" } },
            { name: "a", initialCoordinates: {}, initialRates: {}, inputs: { F: "x*t" } },
          ],
          endTime: "0",
          watch: ["tension", "speed", "tension"],
        }),
        ropePendulum,
      ),
    );
    expect(Object.keys(errors).sort()).toEqual(
      [
        "parameters.0.name",
        "parameters.1.max",
        "parameters.2.mean",
        "parameters.2.sd",
        "samples",
        "seed",
        "cases.0.initialCoordinates.theta",
        "cases.0.initialCoordinates.x",
        "cases.0.inputs.F",
        "cases.0.inputs.G",
        "cases.1.name",
        "cases.1.inputs.F",
        "endTime",
        "watch.1",
        "watch.2",
      ].sort(),
    );
    expect(errors["cases.1.inputs.F"]![0]).toContain("x");
    expect(errors["parameters.2.sd"]).toEqual(["Must be positive."]);
    expect(errors["parameters.2.mean"]).toEqual(["Must lie between the minimum and the maximum."]);
  });

  it("refuses a normal distribution whose bounds leave it practically uniform, and a mean outside them", () => {
    const errors = fieldErrorsOf(() =>
      parseStudy(
        settings({
          mode: "tolerance",
          parameters: [
            parameter({ name: "l", distribution: "normal", mean: "2", sd: "1", min: "1.99", max: "2.01" }),
            parameter({ name: "m", distribution: "normal", mean: "12", sd: "1", min: "9", max: "11" }),
          ],
          watch: ["x"],
        }),
        ropePendulum,
      ),
    );
    expect(errors["parameters.0.sd"]![0]).toContain("uniform");
    expect(errors["parameters.1.mean"]).toEqual(["Must lie between the minimum and the maximum."]);
  });

  it("refuses bounds too far apart to sample between, and NaN or infinite text, so no sample is infinite", () => {
    const errors = fieldErrorsOf(() =>
      parseStudy(
        settings({
          mode: "tolerance",
          parameters: [
            parameter({ name: "l", distribution: "uniform", min: "-1e308", max: "1e308" }),
            parameter({ name: "m", distribution: "uniform", min: "NaN", max: "Infinity" }),
          ],
          watch: ["x"],
        }),
        ropePendulum,
      ),
    );
    expect(errors).toEqual({
      "parameters.0.max": ["The bounds are too far apart to sample between."],
      "parameters.1.min": ['"NaN" is not a number.'],
      "parameters.1.max": ['"Infinity" is not a number.'],
    });
  });

  it("refuses more runs than a study may have, and a symbolic parameter left unvaried", () => {
    const tooMany = fieldErrorsOf(() =>
      parseStudy(
        settings({ parameters: [parameter({ name: "l", values: "1:2:1000" }), parameter({ name: "m", values: "1:2:6" })], watch: ["x"] }),
        ropePendulum,
      ),
    );
    expect(tooMany.parameters![0]).toBe("6,000 runs: at most 5,000 per study.");
    const symbolic = { ...ropePendulum, parameters: ropePendulum.parameters.map((p) => (p.name === "g" ? { name: "g", unit: "m/s^2" } : p)) };
    expect(fieldErrorsOf(() => parseStudy(settings({ watch: ["x"] }), symbolic)).parameters![0]).toContain("Give g a value");
    expect(parseStudy(settings({ parameters: [parameter({ name: "g", values: "9.81" })], watch: ["x"] }), symbolic).runCount).toBe(1);
  });

  it("asks for something to watch and for a case", () => {
    const errors = fieldErrorsOf(() => parseStudy(settings({ cases: [], watch: [] }), ropePendulum));
    expect(errors.watch).toBeDefined();
    expect(errors.cases).toEqual(["Add at least one case."]);
  });
});
