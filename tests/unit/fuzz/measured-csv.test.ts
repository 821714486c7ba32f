import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { MeasuredDataError, parseMeasuredCsv } from "@/lib/simulate";
import { anyText, describeThrown, fuzzSettings, timed } from "./support";

const coordinates = [
  { name: "theta1", unit: "rad" },
  { name: "x", unit: "m" },
];
const READ_BUDGET_MS = 1000;

const headerCell = fc.oneof(
  fc.constantFrom("t [s]", "time [ms]", "theta1 [deg]", "theta1 [rad]", "x [mm]", "x [m]", "theta1' [rad/s]", "energy [J]"),
  fc.constantFrom("t", "x", "x []", "x [furlong]", "y [m]", "t [m]", "x [m", '"x [m]"', "theta1 [deg]", "__proto__ [m]", "constructor [s]", "x' [m]"),
  fc.string({ maxLength: 12 }),
);

const cell = fc.oneof(
  { weight: 6, arbitrary: fc.double({ min: -1e3, max: 1e3, noNaN: true }).map(String) },
  { weight: 2, arbitrary: fc.integer({ min: 0, max: 100 }).map(String) },
  {
    weight: 1,
    arbitrary: fc.constantFrom("", "NaN", "Infinity", "-inf", "1e999", "1,5", "0x10", '"2"', ' "3" ', '"unterminated', "1e", "--1", "#", "\u0000", "😀"),
  },
);

const delimiter = fc.constantFrom(",", ";", "\t", ", ");
const lineEnd = fc.constantFrom("\n", "\r\n", "\r");

/** A measured-data file: comments, a header, rows of cells, odd line ends. */
const csvText = fc
  .record({
    comments: fc.array(
      fc.string({ maxLength: 20 }).map((s) => `# ${s}`),
      { maxLength: 2 },
    ),
    header: fc.oneof(
      {
        weight: 3,
        arbitrary: fc.constantFrom(
          ["t [s]", "theta1 [deg]"],
          ["time [ms]", "x [mm]", "theta1 [rad]"],
          ["t [s]", "theta1 [rad]", "theta1' [rad/s]", "energy [J]"],
        ),
      },
      { weight: 1, arbitrary: fc.array(headerCell, { minLength: 1, maxLength: 4 }) },
    ),
    rows: fc.oneof(
      {
        weight: 3,
        arbitrary: fc.array(fc.array(fc.double({ min: -1e3, max: 1e3, noNaN: true }).map(String), { minLength: 4, maxLength: 4 }), {
          minLength: 2,
          maxLength: 12,
        }),
      },
      { weight: 2, arbitrary: fc.array(fc.array(cell, { minLength: 0, maxLength: 5 }), { maxLength: 12 }) },
    ),
    delimiter,
    lineEnd,
    increasing: fc.boolean(),
  })
  .map(({ comments, header, rows, delimiter, lineEnd, increasing }) => {
    // Half the files get a valid time column, so the reader gets past the first row.
    const body = rows.map((row, i) =>
      (increasing ? [String(i * 0.01), ...row.slice(1, header.length)] : row.slice(0, header.length + (i % 2))).join(delimiter),
    );
    return [...comments, header.join(delimiter), ...body].join(lineEnd);
  });

describe("measured-data CSV reader under fuzzing", () => {
  it("reads any file into consistent series or refuses it with a located MeasuredDataError", () => {
    let read = 0;
    fc.assert(
      fc.property(fc.oneof({ weight: 4, arbitrary: csvText }, { weight: 1, arbitrary: anyText(400) }), (text) => {
        const { ms, outcome } = timed(() => parseMeasuredCsv(text, { coordinates }));
        expect(ms).toBeLessThan(READ_BUDGET_MS);
        if ("error" in outcome) {
          expect(outcome.error instanceof MeasuredDataError, describeThrown(outcome.error)).toBe(true);
          const error = outcome.error as MeasuredDataError;
          expect(error.toLine().length).toBeGreaterThan(0);
          // A line number points at a physical line of the file.
          const lines = text.split(/\r\n|\r|\n/).length;
          if (error.line !== null) {
            expect(error.line).toBeGreaterThanOrEqual(1);
            expect(error.line).toBeLessThanOrEqual(lines);
          }
          return;
        }
        read++;
        const data = outcome.value;
        expect(data.times.length).toBeGreaterThanOrEqual(2);
        for (let i = 1; i < data.times.length; i++) expect(data.times[i]!).toBeGreaterThan(data.times[i - 1]!);
        expect(data.series.length).toBeGreaterThanOrEqual(1);
        for (const series of data.series) {
          expect(series.values.length).toBe(data.times.length);
          for (const value of series.values) expect(Number.isFinite(value)).toBe(true);
        }
      }),
      fuzzSettings("measured CSV", 150),
    );
    expect(read).toBeGreaterThan(0);
  });

  it("refuses a file over the size limit before reading it", () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 64 }), fc.string({ minLength: 1, maxLength: 8 }), (limit, piece) => {
        const text = "t [s], x [m]\n" + piece.repeat(Math.ceil((limit + 1) / piece.length) + 8);
        expect(() => parseMeasuredCsv(text, { coordinates, maxBytes: limit })).toThrow(MeasuredDataError);
      }),
      fuzzSettings("measured CSV size limit", 50),
    );
  });
});
