import { describe, expect, it } from "vitest";
import { parseMeasuredCsv } from "@/lib/simulate/measured";
import { trajectoryCsv } from "@/lib/simulate/trajectory-csv";

// A trolley position and a swing angle at three output times (invented values).
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
const coordinates = [
  { name: "x", unit: "m" },
  { name: "phi", unit: "rad" },
];

describe("trajectory CSV", () => {
  it("writes units in the header, time first, and every number in full", () => {
    const lines = trajectoryCsv(trajectory, { x: "m", phi: "rad" }).trimEnd().split("\n");
    expect(lines[0]).toBe("t [s],x [m],phi [rad],x' [m/s],phi' [rad/s],energy [J]");
    expect(lines).toHaveLength(4);
    expect(lines[2]!.split(",").map(Number)).toEqual([0.1, 0.0995004165278026, 1 / 3, -0.00998334166468282, 3.3333333333333335, 1]);
  });

  it("reads back unchanged as measured data, rate and energy columns included", () => {
    const data = parseMeasuredCsv(trajectoryCsv(trajectory, { x: "m", phi: "rad" }), { coordinates });
    expect(data.timeUnit).toBe("s");
    expect(Array.from(data.times)).toEqual(trajectory.times);
    expect(data.series.map((s) => [s.coordinate, s.unit, s.scale])).toEqual([
      ["x", "m", 1],
      ["phi", "rad", 1],
    ]);
    expect(Array.from(data.series[0]!.values)).toEqual(trajectory.coordinates[0]);
    expect(Array.from(data.series[1]!.values)).toEqual(trajectory.coordinates[1]);
  });

  it("writes a browser run's typed arrays the same way", () => {
    const typed = {
      ...trajectory,
      times: Float64Array.from(trajectory.times),
      coordinates: trajectory.coordinates.map((c) => Float64Array.from(c)),
      rates: trajectory.rates.map((r) => Float64Array.from(r)),
      energy: Float64Array.from(trajectory.energy),
    };
    expect(trajectoryCsv(typed, { x: "m", phi: "rad" })).toBe(trajectoryCsv(trajectory, { x: "m", phi: "rad" }));
  });

  it("writes a coordinate without a unit as dimensionless, which reads back too", () => {
    const csv = trajectoryCsv({ ...trajectory, energy: null });
    expect(csv.split("\n")[0]).toBe("t [s],x [1],phi [1],x' [1/s],phi' [1/s]");
    const data = parseMeasuredCsv(csv, { coordinates: [{ name: "x" }, { name: "phi" }] });
    expect(Array.from(data.series[1]!.values)).toEqual(trajectory.coordinates[1]);
  });

  it("refuses a rate column whose unit is not the coordinate's unit per second", () => {
    const csv = "t [s], x [m], x' [m/s^2]\n0, 0, 0\n1, 0, 0\n";
    expect(() => parseMeasuredCsv(csv, { coordinates })).toThrowError(/"x'" is in m\/s\^2, which cannot be converted to m\/s/);
  });
});
