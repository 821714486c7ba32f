import { describe, expect, it } from "vitest";
import { MeasuredDataError } from "@/lib/simulate/errors";
import { parseMeasuredCsv, resample } from "@/lib/simulate/measured";

const coordinates = [
  { name: "theta1", unit: "rad" },
  { name: "x", unit: "m" },
];

function failure(text: string, options: Partial<Parameters<typeof parseMeasuredCsv>[1]> = {}): MeasuredDataError {
  try {
    parseMeasuredCsv(text, { coordinates, ...options });
  } catch (error) {
    if (error instanceof MeasuredDataError) return error;
    throw error;
  }
  throw new Error("expected a MeasuredDataError");
}

describe("measured data CSV", () => {
  it("reads a rig file with comments and converts deg, mm and ms to SI", () => {
    const text = ["# Gimbal rig G-2, run 14", "", "t [ms], theta1 [deg], x [mm]", "0, 90, 5", "# operator note", "500, 45, 2.5", "1000, -180, 0", ""].join(
      "\n",
    );
    const data = parseMeasuredCsv(text, { coordinates });
    expect(Array.from(data.times)).toEqual([0, 0.5, 1]);
    expect(data.timeUnit).toBe("ms");
    const theta = data.series.find((s) => s.coordinate === "theta1")!;
    // 1 deg = π/180 rad (SI brochure, non-SI units accepted for use with the SI — a fact of the trade).
    expect(theta.values[0]).toBeCloseTo(Math.PI / 2, 14);
    expect(theta.values[2]).toBeCloseTo(-Math.PI, 14);
    expect(theta.unit).toBe("deg");
    expect(theta.targetUnit).toBe("rad");
    const x = data.series.find((s) => s.coordinate === "x")!;
    expect(Array.from(x.values)).toEqual([0.005, 0.0025, 0]);
  });

  it("accepts semicolons, tabs, CRLF line ends and quoted cells", () => {
    const semicolons = parseMeasuredCsv('"t [s]";"theta1 [rad]"\r\n0;0.1\r\n0.1;0.2\r\n', { coordinates });
    expect(Array.from(semicolons.series[0]!.values)).toEqual([0.1, 0.2]);
    const tabs = parseMeasuredCsv("time [s]\tx [cm]\n0\t1\n1\t2\n", { coordinates });
    expect(tabs.series[0]!.values[1]).toBeCloseTo(0.02, 15);
  });

  it("keeps a delimiter inside a quoted cell, so the problem is the cell, not the row", () => {
    // A decimal comma in a quoted cell: one cell that is not a number (the format asks for a decimal point).
    expect(failure('t [s],x [mm]\n0,"1,5"\n0.1,2\n')).toMatchObject({ code: "bad_cell", line: 2, column: "x", message: 'the x cell "1,5" is not a number' });
    // Quoted headers and cells, also after the usual space behind a comma.
    const quoted = parseMeasuredCsv('"t [s]", "x [mm]"\n"0", " 1.5 "\n0.1,"2"\n', { coordinates });
    expect(Array.from(quoted.series[0]!.values)).toEqual([0.0015, 0.002]);
  });

  it("names the line of a quote that is never closed, counting a quoted line break", () => {
    expect(failure('# rig, "log\nt [s],x [mm]\n0,1\n0.1,"2\n')).toMatchObject({ code: "syntax", line: 4, message: "a quoted cell is not closed" });
    // The energy column is checked for its unit and not read, so its quoted line break passes.
    expect(failure('t [s],x [mm],energy [J]\n0,1,"9\n8"\n0.1,2"5,7\n')).toMatchObject({
      code: "bad_cell",
      line: 4,
      message: 'the x cell "2"5" is not a number',
    });
  });

  it("converts to SI when the model gives no unit for a coordinate", () => {
    const data = parseMeasuredCsv("t [min], q [mm]\n0, 1\n1, 2\n", { coordinates: [{ name: "q" }] });
    expect(Array.from(data.times)).toEqual([0, 60]);
    expect(data.series[0]!.values[1]).toBeCloseTo(0.002, 15);
    expect(data.series[0]!.targetUnit).toBe("m");
  });

  it("names the line of a non-monotone time", () => {
    const error = failure("# run 3\nt [s], theta1 [rad]\n0, 0\n0.1, 0\n\n0.1, 0\n");
    expect(error.code).toBe("non_monotone_time");
    expect(error.line).toBe(6);
    expect(error.toLine()).toMatch(/^line 6: /);
  });

  it("names the line and column of NaN, empty and malformed cells", () => {
    expect(failure("t [s], theta1 [rad]\n0, 0\n0.1, NaN\n")).toMatchObject({ code: "bad_cell", line: 3, column: "theta1" });
    expect(failure("t [s], theta1 [rad]\n0, 0\n0.1, \n")).toMatchObject({ code: "bad_cell", line: 3, column: "theta1" });
    expect(failure("t [s], theta1 [rad]\n0, 0\nabc, 1\n")).toMatchObject({ code: "bad_cell", line: 3, column: "time" });
    expect(failure("t [s], theta1 [rad]\n0, 0\n0.2, Infinity\n")).toMatchObject({ code: "bad_cell", line: 3 });
    expect(failure("t [s], theta1 [rad]\n0, 0\n0.2, 1e999\n")).toMatchObject({ code: "bad_cell", line: 3 });
    expect(failure("t [s], theta1 [rad]\n0, 0\n0.2, 1, 3\n")).toMatchObject({ code: "column_count", line: 3 });
  });

  it("refuses missing, unknown and duplicate columns on the header line", () => {
    expect(failure("# header follows\ntheta1 [rad]\n0\n1\n")).toMatchObject({ code: "missing_column", line: 2, column: "t" });
    expect(failure("t [s]\n0\n1\n")).toMatchObject({ code: "missing_column", line: 1 });
    expect(failure("t [s], theta1 [rad]\n0, 0\n1, 0\n", { requiredCoordinates: ["x"] })).toMatchObject({ code: "missing_column", column: "x" });
    expect(failure("t [s], thta1 [rad]\n0, 0\n1, 0\n")).toMatchObject({ code: "unknown_column", line: 1, column: "thta1" });
    expect(failure("t [s], x [m], x [mm]\n0, 0, 0\n1, 0, 0\n")).toMatchObject({ code: "duplicate_column", column: "x" });
    expect(failure("t [s], theta1 (rad)\n0, 0\n1, 0\n")).toMatchObject({ code: "header", line: 1 });
  });

  it("refuses unknown units, missing units and units of the wrong kind", () => {
    expect(failure("t [s], theta1 [dgr]\n0, 0\n1, 0\n")).toMatchObject({ code: "unknown_unit", line: 1, column: "theta1" });
    expect(failure("t [s], theta1\n0, 0\n1, 0\n")).toMatchObject({ code: "missing_unit", column: "theta1" });
    expect(failure("t [s], theta1 [mm]\n0, 0\n1, 0\n")).toMatchObject({ code: "unit_mismatch", column: "theta1" });
    expect(failure("t [m], theta1 [rad]\n0, 0\n1, 0\n")).toMatchObject({ code: "unit_mismatch", column: "t" });
    expect(failure("t [s], x [degC]\n0, 0\n1, 0\n")).toMatchObject({ code: "unknown_unit", column: "x" });
  });

  it("enforces the size and row limits, and needs two rows", () => {
    const rows = ["t [s], x [m]", ...Array.from({ length: 50 }, (_, i) => `${i}, ${i}`)].join("\n");
    expect(failure(rows, { maxRows: 20 })).toMatchObject({ code: "too_many_rows", line: 22 });
    expect(failure(rows, { maxBytes: 100 })).toMatchObject({ code: "too_large", line: null });
    // Multi-byte characters count as bytes, not characters.
    const degrees = `# ${"°".repeat(200)}\nt [s], x [m]\n0, 0\n1, 0\n`; // 226 characters, 426 bytes in UTF-8
    expect(failure(degrees, { maxBytes: 300 })).toMatchObject({ code: "too_large" });
    expect(parseMeasuredCsv(degrees, { coordinates, maxBytes: 426 }).times.length).toBe(2);
    expect(failure("t [s], x [m]\n0, 0\n")).toMatchObject({ code: "too_few_rows" });
    expect(failure("# nothing\n\n")).toMatchObject({ code: "empty" });
  });

  it("resamples by linear interpolation with gaps outside the samples", () => {
    const out = resample([0, 1, 2], [0, 10, 0], [-0.5, 0, 0.25, 1.5, 2, 2.5]);
    expect(Array.from(out)).toEqual([Number.NaN, 0, 2.5, 5, 0, Number.NaN]);
  });
});
