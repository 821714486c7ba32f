import { describe, expect, it } from "vitest";
import { studyRunTask, type StudyRunTaskInput } from "@/lib/study/task";
import { ropePendulum } from "./fixtures";

const theta0 = 0.3;
const l = 2;
const base: StudyRunTaskInput = {
  modelKey: "rope-pendulum",
  model: ropePendulum,
  watch: [
    { name: "tension", unit: "N", kind: "output" },
    { name: "lambda_rope", unit: null, kind: "multiplier" },
    { name: "x", unit: "m", kind: "coordinate" },
  ],
  settings: {
    initialCoordinates: { x: l * Math.sin(theta0), y: -l * Math.cos(theta0) },
    initialRates: {},
    inputs: {},
    parameters: {},
    startTime: 0,
    endTime: 3,
    outputStep: 0.001,
    tolerance: 1e-10,
    timeLimitMs: 20_000,
  },
};

describe("studyRunTask", () => {
  it("summarizes a pendulum swing: the rope tension's peak at the bottom and the swing's amplitude", () => {
    const output = studyRunTask(base);
    if (!output.ok) throw new Error(output.error.message);
    const { summary } = output;
    expect(summary.status).toBe("done");
    // Released from rest at θ0, the tension at the lowest point is m g (3 − 2 cos θ0) (energy conservation with the
    // centripetal force at the bottom; fact of the trade): 10 · 9.81 · (3 − 2 cos 0.3) = 106.864 N.
    expect(summary.peaks.tension!.peak).toBeCloseTo(10 * 9.81 * (3 - 2 * Math.cos(theta0)), 2);
    // The least tension is at the ends of the swing, m g cos θ0 (fact of the trade).
    expect(summary.peaks.tension!.min).toBeCloseTo(10 * 9.81 * Math.cos(theta0), 2);
    // Without damping the swing returns to ±l sin θ0 (energy conservation; fact of the trade).
    expect(summary.peaks.x!.max).toBeCloseTo(l * Math.sin(theta0), 5);
    expect(summary.peaks.x!.min).toBeCloseTo(-l * Math.sin(theta0), 5);
    // The bottom is passed at T/4, 3T/4, …, with T ≈ 2π√(l/g)(1 + θ0²/16) (the first correction of the pendulum's
    // period, fact of the trade); every pass has the same tension, so the peak is at one of them (1 ms grid).
    const period = 2 * Math.PI * Math.sqrt(l / 9.81) * (1 + theta0 ** 2 / 16);
    const passes = (summary.peaks.tension!.timeOfPeak - period / 4) / (period / 2);
    expect(Math.abs(passes - Math.round(passes)) * (period / 2)).toBeLessThan(0.003);
    expect(output.multiplierUnits.lambda_rope).toBeTruthy();
    expect(summary.constraintResidual!).toBeLessThan(1e-8);
    // Three watched series on at most 500 points of the 3001-point grid.
    expect(summary.series.tension).toHaveLength(500);
  });

  it("gives the energy drift of a conservative model and none for a driven one", () => {
    const free = { ...ropePendulum, inputs: [], forces: {} };
    const conservative = studyRunTask({ ...base, modelKey: "free-pendulum", model: free, watch: [base.watch[2]!] });
    if (!conservative.ok) throw new Error(conservative.error.message);
    // A conservative system keeps its energy to about the integration tolerance (fact of the trade).
    expect(conservative.summary.energyDrift!).toBeLessThan(1e-6);
    const driven = studyRunTask(base);
    expect(driven.ok && driven.summary.energyDrift).toBeNull();
  });

  it("records a run stopped by its time limit as failed, with the grid points past the stop empty", () => {
    const output = studyRunTask({ ...base, settings: { ...base.settings, endTime: 100_000, outputStep: 10, timeLimitMs: 50 } });
    if (!output.ok) throw new Error(output.error.message);
    expect(output.summary.status).toBe("failed");
    expect(output.summary.failure!.reason).toBe("time_limit");
    expect(output.summary.series.x!.at(-1)).toBeNaN();
  });

  it("answers settings the simulator refuses as a failure of that run", () => {
    const output = studyRunTask({ ...base, settings: { ...base.settings, inputs: { F: "q*t" } } });
    expect(output.ok).toBe(false);
  });
});
