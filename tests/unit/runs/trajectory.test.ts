import { describe, expect, it } from "vitest";
import { decimate, decimationStride, trajectoryCsv, valueCount } from "@/lib/runs/trajectory";
import { parseMeasuredCsv } from "@/lib/simulate/measured";

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

describe("trajectory CSV", () => {
  it("writes units in the header and every number in full", () => {
    const lines = trajectoryCsv(trajectory, { x: "m", phi: "rad" }).trimEnd().split("\n");
    expect(lines[0]).toBe("t [s],x [m],phi [rad],x' [m/s],phi' [rad/s],energy [J]");
    expect(lines).toHaveLength(4);
    expect(lines[2]!.split(",").map(Number)).toEqual([0.1, 0.0995004165278026, 1 / 3, -0.00998334166468282, 3.3333333333333335, 1]);
  });

  it("reads back through the measured-data parser once the rate and energy columns are left out", () => {
    const csv = trajectoryCsv({ ...trajectory, rates: [], coordinateNames: ["x", "phi"], energy: null }, { x: "m", phi: "rad" })
      .split("\n")
      .map((line) => line.split(",").slice(0, 3).join(","))
      .join("\n");
    const data = parseMeasuredCsv(csv, { coordinates: [{ name: "x", unit: "m" }, { name: "phi", unit: "rad" }] });
    expect(Array.from(data.series[1]!.values)).toEqual(trajectory.coordinates[1]);
  });

  it("counts stored values and thins long series keeping the last point", () => {
    expect(valueCount(trajectory)).toBe(3 * 6);
    expect(decimationStride(10_001, 5_000)).toBe(3);
    expect(decimate([0, 1, 2, 3, 4, 5, 6], 3)).toEqual([0, 3, 6]);
    expect(decimate([0, 1, 2, 3, 4, 5], 3)).toEqual([0, 3, 5]);
  });
});
