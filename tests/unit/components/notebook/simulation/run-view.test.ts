import { describe, expect, it } from "vitest";
import { displayOfStoredRun } from "@/components/notebook/simulation/run-view";
import type { RunJson } from "@/lib/runs/views";

const base = {
  id: "run-1",
  derivationId: "derivation-1",
  status: "completed",
  failure: null,
  timeReached: 0.2,
  settings: { label: "swing" },
  pointCount: 3,
  energyDrift: null,
  modelHash: "hash",
  createdBy: { id: "user-1", name: "Ana" },
  createdAt: "2026-12-02T10:00:00.000Z",
} as const;

const trajectory = {
  coordinateNames: ["x", "y"],
  times: [0, 0.1, 0.2],
  coordinates: [
    [1, 1, 1],
    [0, 0, 0],
  ],
  rates: [
    [0, 0, 0],
    [0, 0, 0],
  ],
  energy: null,
};

describe("a stored run in the results view", () => {
  it("carries the outputs with their peaks, the multipliers, residuals and the projection notice", () => {
    const projection = { coordinates: [], rates: [{ name: "y'", given: 0.2, projected: 0 }], residuals: [{ name: "rod", kind: "rate" as const, given: 0.2 }] };
    const run = {
      ...base,
      summary: {
        coordinateUnits: { x: "m", y: "m" },
        constraints: {
          kinds: ["position" as const],
          maxResidual: [1e-12],
          initialProjection: projection,
          largestCorrection: { coordinates: 1e-13, rates: 1e-12 },
          method: "index reduction",
          explicitTime: false,
        },
        columnUnits: { multipliers: { lambda_rod: "kg/s^2" }, residuals: { rod: "m^2" } },
      },
      trajectory: {
        ...trajectory,
        outputs: [{ name: "tension", unit: "N", values: [24.5, -30, 12], peak: { value: -30, time: 0.1 } }],
        constraints: {
          names: ["rod"],
          multiplierNames: ["lambda_rod"],
          multipliers: [[-8, 10, -4]],
          residuals: [[0, 1e-12, 0]],
          rateResiduals: [[0, 0, 0]],
        },
      },
    } as unknown as RunJson;
    const display = displayOfStoredRun(run)!;
    expect(display.outputs).toHaveLength(1);
    expect(display.outputs![0]).toMatchObject({ name: "tension", unit: "N", peak: { value: -30, time: 0.1 } });
    expect(Array.from(display.outputs![0]!.values)).toEqual([24.5, -30, 12]);
    expect(display.constraints).toMatchObject({ names: ["rod"], kinds: ["position"], multiplierNames: ["lambda_rod"], initialProjection: projection });
    expect(Array.from(display.constraints!.multipliers[0]!)).toEqual([-8, 10, -4]);
    expect(display.columnUnits).toEqual({ multipliers: { lambda_rod: "kg/s^2" }, residuals: { rod: "m^2" } });
  });

  it("shows a run stored before outputs were kept without them", () => {
    const display = displayOfStoredRun({ ...base, summary: {}, trajectory } as unknown as RunJson)!;
    expect(display.outputs).toEqual([]);
    expect(display.constraints).toBeNull();
  });
});
