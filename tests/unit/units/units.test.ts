import { describe, expect, it } from "vitest";
import { isAngleUnitText, MODEL_UNIT_SYMBOLS, parseUnitText, sameUnitDimension, siUnitText, UnitError } from "@/lib/units";

function unitError(text: string, symbols?: readonly string[]): UnitError {
  try {
    parseUnitText(text, { symbols });
  } catch (error) {
    if (error instanceof UnitError) return error;
    throw error;
  }
  throw new Error(`expected "${text}" to be refused`);
}

describe("unit text", () => {
  it("reads products, quotients, powers and parentheses into SI factor and dimension", () => {
    expect(parseUnitText("kg*m^2/s^2")).toEqual({ factor: 1, dimension: [1, 2, -2, 0, 0, 0, 0, 0], hasOffset: false });
    expect(parseUnitText("N*m/rad").dimension).toEqual([1, 2, -2, 0, 0, 0, 0, -1]);
    expect(parseUnitText("m/(s^2)").dimension).toEqual(parseUnitText("m/s/s").dimension);
    expect(parseUnitText("s^-1").dimension).toEqual(parseUnitText("Hz").dimension);
    expect(parseUnitText("s^(-1)").dimension).toEqual(parseUnitText("1/s").dimension);
    expect(parseUnitText("kg^0.5").dimension[0]).toBe(0.5);
    expect(parseUnitText(" kg * m ").dimension).toEqual([1, 1, 0, 0, 0, 0, 0, 0]);
  });

  it("converts prefixed and accepted non-SI units with their exact factors", () => {
    // SI prefixes and the units accepted for use with the SI (deg = π/180 rad, min = 60 s, h = 3600 s);
    // the international inch and foot are 0.0254 m and 0.3048 m exactly; 1 bar = 10^5 Pa. Facts of the trade.
    expect(parseUnitText("mm").factor).toBe(1e-3);
    expect(parseUnitText("kN").factor).toBe(1e3);
    expect(parseUnitText("kg").factor).toBe(1);
    expect(parseUnitText("deg").factor).toBe(Math.PI / 180);
    expect(parseUnitText("min").factor).toBe(60);
    expect(parseUnitText("h").factor).toBe(3600);
    expect(parseUnitText("in").factor).toBe(0.0254);
    expect(parseUnitText("ft").factor).toBe(0.3048);
    expect(parseUnitText("bar").factor).toBe(1e5);
    expect(parseUnitText("deg/s").factor).toBe(Math.PI / 180);
    expect(parseUnitText("degC").hasOffset).toBe(true);
  });

  it("keeps the plane angle as its own dimension", () => {
    expect(sameUnitDimension(parseUnitText("deg").dimension, parseUnitText("rad").dimension)).toBe(true);
    expect(sameUnitDimension(parseUnitText("rad").dimension, parseUnitText("1").dimension)).toBe(false);
    expect(isAngleUnitText("rad")).toBe(true);
    expect(isAngleUnitText("2*rad")).toBe(true);
    expect(isAngleUnitText("m")).toBe(false);
    expect(isAngleUnitText("rad/s")).toBe(false);
  });

  it("names SI units over base symbols", () => {
    expect(siUnitText(parseUnitText("mm").dimension)).toBe("m");
    expect(siUnitText(parseUnitText("deg/s").dimension)).toBe("rad/s");
    expect(siUnitText(parseUnitText("kN*m").dimension)).toBe("kg*m^2/s^2");
    expect(siUnitText(parseUnitText("1").dimension)).toBe("1");
  });

  it("refuses text that does not read, with the position of the problem", () => {
    expect(unitError("")).toMatchObject({ code: "syntax", position: 0 });
    expect(unitError("kg m")).toMatchObject({ code: "syntax", position: 3 });
    expect(unitError("m/s^")).toMatchObject({ code: "syntax", position: 4 });
    expect(unitError("kg*blorp")).toMatchObject({ code: "unknown_symbol", position: 3, length: 5 });
    expect(unitError("0*m")).toMatchObject({ code: "value" });
    expect(unitError("m/s²")).toMatchObject({ code: "syntax", position: 3 });
  });

  it("limits a model to its SI symbols", () => {
    expect(unitError("km", MODEL_UNIT_SYMBOLS)).toMatchObject({ code: "not_allowed", message: '"km" is not a unit symbol; use kg m s rad N J W Pa Hz' });
    expect(unitError("lb", MODEL_UNIT_SYMBOLS)).toMatchObject({ code: "unknown_symbol", position: 0 });
    expect(parseUnitText("N*s/m", { symbols: MODEL_UNIT_SYMBOLS }).dimension).toEqual([1, 0, -1, 0, 0, 0, 0, 0]);
  });
});
