import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { ModelError } from "@/lib/mechanics";
import { EnginePool } from "@/lib/mechanics/worker";
import type { FitTaskOutput, SimulateTaskInput, SimulateTaskOutput } from "@/lib/runs/tasks";
import { trajectoryCsv } from "@/lib/simulate";

// The server's path for simulations: lib/runs/simulation-worker.ts as build:workers bundles it (the
// Vitest global setup, tests/support/build-workers.ts, builds it before any test file), run through
// the same pool class as in lib/workers/simulation-pool.ts.
const workerFile = path.resolve("dist/workers/simulation-worker.mjs");
let pool: EnginePool;

beforeAll(() => {
  pool = new EnginePool({ workerFile, size: 1, taskTimeoutMs: 20_000 });
});
afterAll(async () => {
  await pool?.close();
});

// A test-rig pendulum: 1.3 kg on a 0.8 m arm.
const pendulum = {
  title: "Rig pendulum",
  coordinates: [{ name: "theta", unit: "rad" }],
  parameters: [
    { name: "m", unit: "kg", value: 1.3 },
    { name: "l", unit: "m", value: 0.8 },
    { name: "g", unit: "m/s^2", value: 9.81 },
  ],
  kinetic: "1/2*m*l^2*theta'^2",
  potential: "-m*g*l*cos(theta)",
};

describe("the server's simulation worker", () => {
  it("derives and integrates a model in the worker thread", async () => {
    const input: SimulateTaskInput = { model: pendulum, settings: { initialCoordinates: { theta: 0.2 }, endTime: 2, outputStep: 0.5 } };
    const output = await pool.run<SimulateTaskOutput>("simulate", input);
    expect(output.ok).toBe(true);
    if (!output.ok) return;
    expect(Array.from(output.result.trajectory.times)).toEqual([0, 0.5, 1, 1.5, 2]);
    expect(output.result.trajectory.coordinates[0]![0]).toBe(0.2);
    // The energy function of a frictionless pendulum is conserved, so its drift is checked.
    expect(output.energyCheck!.warning).toBe(false);
  }, 30_000);

  it("answers bad settings as a result naming the setting, and a bad model as the engine's typed error", async () => {
    const bad = await pool.run<SimulateTaskOutput>("simulate", {
      model: pendulum,
      settings: { initialCoordinates: { theta: 0.2 }, endTime: -1, outputStep: 0.5 },
    });
    expect(bad.ok).toBe(false);
    if (!bad.ok) expect(bad.error.name).toBe("SimulationSetupError");
    const broken = await pool
      .run("simulate", { model: { ...pendulum, potential: "-m*g*l*cos(theta" }, settings: { initialCoordinates: { theta: 0.2 }, endTime: 1, outputStep: 0.5 } })
      .catch((e: unknown) => e);
    expect(broken).toBeInstanceOf(ModelError);
    expect((broken as ModelError).field).toBe("potential");
  }, 30_000);

  it("fits a parameter to a run's own CSV export, read as measured data", async () => {
    // Data made by the same model with l = 0.65 m and no noise: the fit must return 0.65.
    const truth = await pool.run<SimulateTaskOutput>("simulate", {
      model: { ...pendulum, parameters: pendulum.parameters.map((p) => (p.name === "l" ? { ...p, value: 0.65 } : p)) },
      settings: { initialCoordinates: { theta: 0.5 }, endTime: 3, outputStep: 0.05, relativeTolerance: 1e-11 },
    });
    if (!truth.ok) throw new Error(truth.error.message);
    const { trajectory, energy } = truth.result;
    const csvText = trajectoryCsv({ ...trajectory, energy }, { theta: "rad" });
    const fit = await pool.run<FitTaskOutput>("fit", { model: pendulum, csvText, parameters: [{ name: "l", min: 0.1, max: 2 }], timeLimitMs: 20_000 });
    expect(fit.ok).toBe(true);
    if (!fit.ok) return;
    expect(fit.result.parameters[0]!.value).toBeCloseTo(0.65, 6);
  }, 60_000);
});
