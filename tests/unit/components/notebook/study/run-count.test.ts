import { describe, expect, it } from "vitest";
import { gridValueCount, studyRunCount } from "@/components/notebook/study/run-count";
import { DEFAULT_STUDY_SETTINGS } from "@/lib/notebook/document";

const parameter = (name: string, values: string) => ({ name, values, distribution: "uniform" as const, min: "", max: "", mean: "", sd: "" });
const nominal = { name: "nominal", initialCoordinates: {}, initialRates: {}, inputs: {} };

describe("study run count", () => {
  it("counts a list and a from:to:count range", () => {
    expect(gridValueCount("0.5, 1, 2")).toBe(3);
    expect(gridValueCount(" 4.75 ")).toBe(1);
    expect(gridValueCount("0.5:2:4")).toBe(4);
    expect(gridValueCount("-1e-3 : 1e-3 : 11")).toBe(11);
  });

  it("does not count text that is neither", () => {
    expect(gridValueCount("")).toBeNull();
    expect(gridValueCount("0.5, , 2")).toBeNull();
    expect(gridValueCount("0.5:2")).toBeNull();
    expect(gridValueCount("0.5:2:2.5")).toBeNull();
    expect(gridValueCount("0.5:2:0")).toBeNull();
    expect(gridValueCount("heavy")).toBeNull();
    // The server's parser refuses a value listed twice, so the count does too.
    expect(gridValueCount("1, 2, 1")).toBeNull();
  });

  it("multiplies the grid's value counts by the cases", () => {
    const settings = {
      ...DEFAULT_STUDY_SETTINGS,
      parameters: [parameter("m", "500, 1000, 2000"), parameter("l", "4.75:5.25:5")],
      cases: [nominal, { ...nominal, name: "hard stop" }],
    };
    expect(studyRunCount(settings)).toEqual({ total: 30, perCase: 15, cases: 2, unreadable: null });
  });

  it("runs a grid without parameters once per case", () => {
    expect(studyRunCount(DEFAULT_STUDY_SETTINGS).total).toBe(1);
  });

  it("counts samples per case in a tolerance run and says what it cannot read", () => {
    expect(studyRunCount({ ...DEFAULT_STUDY_SETTINGS, mode: "tolerance", samples: "200", cases: [nominal, nominal, nominal] }).total).toBe(600);
    expect(studyRunCount({ ...DEFAULT_STUDY_SETTINGS, mode: "tolerance", samples: "many" })).toMatchObject({
      total: null,
      unreadable: "the number of samples",
    });
    expect(studyRunCount({ ...DEFAULT_STUDY_SETTINGS, parameters: [parameter("m", "1,,2")] })).toMatchObject({ total: null, unreadable: "the values of m" });
  });
});
