import { describe, expect, it } from "vitest";
import { checkParameterValue, checkSymbolName, checkUnitSyntax, duplicateNames } from "@/lib/notebook/field-checks";
import { addRow, blankDocument } from "@/lib/notebook/document";

describe("unit syntax", () => {
  it.each(["kg", "kg*m^2/s^2", "N*s/m", "m/s^2", "1", "rad/s", "N*m", "kg*m^2", "Hz", "Pa*m^2", "m/(s^2)", "s^-1", "s^(-1)", "kg^0.5", " kg * m "])(
    "accepts %s",
    (unit) => expect(checkUnitSyntax(unit)).toEqual({ ok: true }),
  );

  it.each([
    ["", 0, "required"],
    ["kgm", 0, "not a unit symbol"],
    ["kg*", 3, "ends too early"],
    ["kg**m", 3, "unexpected"],
    ["m/s^", 4, "needs a number"],
    ["(kg*m", 5, 'expected ")"'],
    ["kg m", 3, "unexpected"],
    ["m-s", 1, "unexpected"],
    ["lb", 0, "not a unit symbol"],
    ["m/s²", 3, "unexpected"],
  ] as const)("rejects %j at position %i", (unit, position, message) => {
    const result = checkUnitSyntax(unit);
    expect(result.ok).toBe(false);
    if (!result.ok) {
      expect(result.position).toBe(position);
      expect(result.message).toContain(message);
    }
  });
});

describe("parameter values and names", () => {
  it("accepts blank (symbolic) and decimal numbers, rejects the rest", () => {
    for (const ok of ["", "  ", "9.81", "-2", "1.5e-3", ".5", "3."]) expect(checkParameterValue(ok).ok, ok).toBe(true);
    for (const bad of ["9,81", "1/2", "pi", "1e", "Infinity", "NaN", "0x10", "1e999"]) expect(checkParameterValue(bad).ok, bad).toBe(false);
  });

  it("accepts identifiers and refuses reserved names", () => {
    expect(checkSymbolName("theta1")).toEqual({ ok: true });
    expect(checkSymbolName("_k")).toEqual({ ok: true });
    for (const bad of ["", "1x", "x-y", "sin", "pi", "t", "e"]) expect(checkSymbolName(bad).ok, bad).toBe(false);
  });

  it("finds names used twice across grids", () => {
    let doc = blankDocument(
      "d",
      (() => {
        let n = 0;
        return () => `c${++n}`;
      })(),
    );
    doc = addRow(doc, "c1", { id: "a", name: "x", unit: "m", description: "" });
    doc = addRow(doc, "c2", { id: "b", name: "x", unit: "kg", value: "", description: "" });
    doc = addRow(doc, "c2", { id: "c", name: "m", unit: "kg", value: "", description: "" });
    expect([...duplicateNames(doc)]).toEqual([
      [
        "x",
        [
          { cellId: "c1", rowId: "a", kind: "coordinates" },
          { cellId: "c2", rowId: "b", kind: "parameters" },
        ],
      ],
    ]);
  });
});

describe("Greek names", () => {
  it("refuses a Greek letter with the name to write instead", () => {
    expect(checkSymbolName("θ1")).toEqual({ ok: false, message: 'write Greek letters by name (θ as "theta"); they are shown as the letter', position: 0 });
  });
});
