import { describe, expect, it } from "vitest";
import { formatTicks } from "@/components/notebook/simulation/chart";

describe("chart tick labels", () => {
  it("gives small drifts in exponent form instead of rows of zeros", () => {
    expect(formatTicks([-4e-10, -2e-10, 0, 2e-10, 4e-10])).toEqual(["-4e-10", "-2e-10", "0", "2e-10", "4e-10"]);
    expect(formatTicks([-0.04, -0.02, 0])).toEqual(["-0.04", "-0.02", "0"]);
    expect(formatTicks([1.5e-10, 2.5e-10])).toEqual(["1.5e-10", "2.5e-10"]);
  });

  it("uses as many decimals as the spacing needs, and no negative zero", () => {
    expect(formatTicks([-0.5, -0.25, 0, 0.25])).toEqual(["-0.50", "-0.25", "0", "0.25"]);
    expect(formatTicks([0, 2, 4, 6, 8])).toEqual(["0", "2", "4", "6", "8"]);
    expect(formatTicks([-0.2, -0.1, 5e-17, 0.1])).toEqual(["-0.2", "-0.1", "0", "0.1"]);
  });

  it("writes large values with an exponent", () => {
    expect(formatTicks([0, 2e5, 4e5])).toEqual(["0", "2e5", "4e5"]);
  });
});
