import { describe, expect, it } from "vitest";
import { formatLogTicks, formatTicks } from "@/components/notebook/simulation/chart";

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

describe("log axis tick labels", () => {
  // uPlot's splits of a log axis: 1 … 9 × 10^k for every decade in range.
  const splitsOf = (from: number, to: number) => {
    const splits: number[] = [];
    for (let k = from; k < to; k++) for (let m = 1; m <= 9; m++) splits.push(Number((m * 10 ** k).toPrecision(2)));
    splits.push(10 ** to);
    return splits;
  };

  it("labels decades only, plainly from 0.001 to 10000 and with an exponent beyond", () => {
    const splits = splitsOf(-1, 1);
    expect(formatLogTicks(splits, 600)).toEqual(["0.1", "", "", "", "", "", "", "", "", "1", "", "", "", "", "", "", "", "", "10"]);
    const labels = formatLogTicks(splitsOf(-6, 5), 2000).filter((label) => label !== "");
    expect(labels).toEqual(["1e-6", "1e-5", "1e-4", "0.001", "0.01", "0.1", "1", "10", "100", "1000", "10000", "1e5"]);
  });

  it("labels every second or third decade when the plot is too narrow for all of them", () => {
    // Nine decades, the widest label "0.001" (45 px), on a 250 px plot: every second decade.
    const narrow = formatLogTicks(splitsOf(-6, 2), 250).filter((label) => label !== "");
    expect(narrow).toEqual(["1e-6", "1e-4", "0.01", "1", "100"]);
    const labelled = formatLogTicks(splitsOf(-6, 2), 120).filter((label) => label !== "");
    expect(labelled.length).toBeLessThanOrEqual(3);
    expect(labelled).toContain("1");
  });

  it("leaves the axis blank rather than mislabelled when no split is a decade", () => {
    expect(formatLogTicks([2, 3, 5], 300)).toEqual(["", "", ""]);
  });
});
