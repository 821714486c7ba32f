import { describe, expect, it } from "vitest";
import { extremesOf, gridIndices, studyCsv } from "@/lib/study";

describe("gridIndices", () => {
  it("keeps every point of a short series and spreads 500 over a long one, ends included", () => {
    expect(gridIndices(4)).toEqual([0, 1, 2, 3]);
    const long = gridIndices(1001);
    expect(long).toHaveLength(500);
    expect(long[0]).toBe(0);
    expect(long[499]).toBe(1000);
    expect(new Set(long).size).toBe(500);
  });
});

describe("extremesOf", () => {
  it("finds min, max and the signed peak with their first times, skipping non-finite values", () => {
    expect(extremesOf([0, 1, 2, 3], [1, -3, NaN, 2])).toEqual({ min: -3, timeOfMin: 1, max: 2, timeOfMax: 3, peak: -3, timeOfPeak: 1 });
    expect(extremesOf([0, 1], [NaN, Infinity])).toBeNull();
  });
});

describe("studyCsv", () => {
  it("writes one row per run with units in the header and a failed run's reason", () => {
    const csv = studyCsv({
      parameters: [{ name: "l", unit: "m" }],
      watch: [{ name: "tension", unit: "N", kind: "output" }],
      residualUnit: "m^2",
      runs: [
        {
          index: 1,
          caseName: "=hard, fast",
          parameters: { l: 2 },
          status: "failed",
          failure: { reason: "time_limit", message: "stopped after 10 s" },
          peaks: {},
          energyDrift: null,
          constraintResidual: null,
        },
        {
          index: 0,
          caseName: "gentle",
          parameters: { l: 1.5 },
          status: "done",
          failure: null,
          peaks: { tension: { min: 90, timeOfMin: 1.5, max: 120.5, timeOfMax: 0.75, peak: 120.5, timeOfPeak: 0.75 } },
          energyDrift: 1e-9,
          constraintResidual: 2e-12,
        },
      ],
    });
    expect(csv.split("\n")).toEqual([
      "run,case,l [m],status,failure,tension peak [N],tension time of peak [s],tension min [N],tension max [N],energy drift [1],constraint residual [m^2]",
      "0,gentle,1.5,done,,120.5,0.75,90,120.5,1e-9,2e-12",
      `1,"'=hard, fast",2,failed,time_limit: stopped after 10 s,,,,,,`,
      "",
    ]);
  });
});
