import { describe, expect, it } from "vitest";
import type { MassMatrixForm } from "@/lib/simulate/system";
import { createWorkerHandler, type SimulationOutcome, type WorkerRequest, type WorkerResponse } from "@/lib/simulate/worker-protocol";

const pendulumForm: MassMatrixForm = {
  coordinates: ["theta"],
  inputs: ["u"],
  parameters: [
    { name: "m", value: 1.3 },
    { name: "l", value: 0.8 },
    { name: "g", value: 9.81 },
  ],
  massMatrix: [["m*l^2"]],
  forcing: ["-m*g*l*sin(theta) + u"],
  energy: "1/2*m*l^2*theta'^2 - m*g*l*cos(theta)",
  energyConserved: true,
};

function collect() {
  const messages: WorkerResponse[] = [];
  const transfers: ArrayBuffer[][] = [];
  const handle = createWorkerHandler((message, transfer) => {
    messages.push(message);
    transfers.push(transfer ?? []);
  });
  return { messages, transfers, handle };
}

describe("worker protocol", () => {
  it("runs a simulation job to one result with the energy check and transferable arrays", async () => {
    const { messages, transfers, handle } = collect();
    await handle({
      type: "start",
      id: "run-1",
      job: { kind: "simulate", system: pendulumForm, settings: { initialCoordinates: { theta: 1 }, endTime: 5, outputStep: 0.01 } },
    });
    const results = messages.filter((m) => m.type === "result");
    expect(results).toHaveLength(1);
    const outcome = (results[0] as Extract<WorkerResponse, { type: "result" }>).outcome as SimulationOutcome;
    expect(outcome.result.status).toBe("completed");
    expect(outcome.result.trajectory.times.length).toBe(501);
    expect(outcome.energyCheck!.relativeDrift).toBeLessThan(1e-7);
    expect(outcome.energyCheck!.warning).toBe(false);
    // Every series has its own buffer, so transferring one does not detach another.
    const buffers = transfers[messages.indexOf(results[0]!)]!;
    expect(new Set(buffers).size).toBe(buffers.length);
    expect(buffers.length).toBe(1 + 1 + 1 + 1 + 1);
  });

  it("stops a running job on cancel and keeps the partial trajectory", async () => {
    const { messages, handle } = collect();
    const job: WorkerRequest = {
      type: "start",
      id: "long",
      job: {
        kind: "simulate",
        system: pendulumForm,
        settings: { initialCoordinates: [1], endTime: 1e5, outputStep: 1, relativeTolerance: 1e-12, progressIntervalMs: 1, timeLimitMs: 20_000 },
      },
    };
    const running = handle(job);
    // Cancel once the job has reported progress (it yields between slices).
    while (!messages.some((m) => m.type === "progress")) await new Promise((resolve) => setTimeout(resolve, 5));
    await handle({ type: "cancel", id: "long" });
    await running;
    const result = messages.find((m) => m.type === "result") as Extract<WorkerResponse, { type: "result" }>;
    const outcome = result.outcome as SimulationOutcome;
    expect(outcome.result.failure!.reason).toBe("cancelled");
    expect(outcome.result.trajectory.times.length).toBeGreaterThan(1);
    expect(outcome.result.failure!.timeReached).toBeLessThan(1e5);
  });

  it("answers a bad job with a typed error naming the setting", async () => {
    const { messages, handle } = collect();
    await handle({
      type: "start",
      id: "bad",
      job: { kind: "simulate", system: pendulumForm, settings: { initialCoordinates: [1], endTime: 1, outputStep: 0.1, inputs: { u: "0.5*sin(2*t" } } },
    });
    expect(messages).toEqual([
      { type: "error", id: "bad", error: expect.objectContaining({ name: "SimulationSetupError", code: "expression", field: "inputs.u" }) },
    ]);
  });

  it("runs a fit job and reports the fitted values", async () => {
    const { messages, handle } = collect();
    // Measured data made by the same model with l = 0.65 m (no noise): the fit must return it.
    const truthRun = collect();
    await truthRun.handle({
      type: "start",
      id: "truth",
      job: {
        kind: "simulate",
        system: {
          ...pendulumForm,
          parameters: [
            { name: "m", value: 1.3 },
            { name: "l", value: 0.65 },
            { name: "g", value: 9.81 },
          ],
        },
        settings: { initialCoordinates: [0.5], endTime: 3, outputStep: 0.05, relativeTolerance: 1e-11 },
      },
    });
    const truth = ((truthRun.messages.find((m) => m.type === "result") as Extract<WorkerResponse, { type: "result" }>).outcome as SimulationOutcome).result;
    await handle({
      type: "start",
      id: "fit-1",
      job: {
        kind: "fit",
        system: pendulumForm,
        measured: {
          times: truth.trajectory.times,
          timeUnit: "s",
          series: [{ coordinate: "theta", unit: "rad", targetUnit: "rad", scale: 1, values: truth.trajectory.coordinates[0]! }],
        },
        parameters: [{ name: "l", min: 0.1, max: 2 }],
      },
    });
    const result = messages.find((m) => m.type === "result") as Extract<WorkerResponse, { type: "result" }>;
    expect(result.outcome.kind).toBe("fit");
    if (result.outcome.kind !== "fit") return;
    expect(result.outcome.result.parameters[0]!.value).toBeCloseTo(0.65, 6);
    expect(messages.some((m) => m.type === "progress")).toBe(true);
  });
});
