import { describe, expect, it } from "vitest";
import { decimate, decimationStride, valueCount } from "@/lib/runs/trajectory";

const trajectory = {
  coordinateNames: ["x", "phi"],
  times: [0, 0.1, 0.2],
  coordinates: [
    [0.1, 0.0995004165278026, 0.0980066577841242],
    [0, 1 / 3, 2 / 3],
  ],
  rates: [
    [0, -0.00998334166468282, -0.0198669330795061],
    [3.3333333333333335, 3.3333333333333335, 3.3333333333333335],
  ],
  energy: [1, 1, 1],
};

describe("stored trajectories", () => {
  it("counts stored values and thins long series keeping the last point", () => {
    expect(valueCount(trajectory)).toBe(3 * 6);
    expect(decimationStride(10_001, 5_000)).toBe(3);
    expect(decimate([0, 1, 2, 3, 4, 5, 6], 3)).toEqual([0, 3, 6]);
    expect(decimate([0, 1, 2, 3, 4, 5], 3)).toEqual([0, 3, 5]);
  });

  it("counts the outputs, multipliers and both residual series of a constrained run", () => {
    const three = [0, 0, 0];
    const constrained = {
      ...trajectory,
      outputs: [{ name: "tension", unit: "N", values: three, peak: null }],
      constraints: { names: ["rod"], multiplierNames: ["lambda_rod"], multipliers: [three], residuals: [three], rateResiduals: [three] },
    };
    expect(valueCount(constrained)).toBe(3 * (6 + 1 + 3));
  });
});
