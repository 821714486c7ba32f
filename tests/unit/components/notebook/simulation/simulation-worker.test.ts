import { afterAll, describe, expect, it } from "vitest";
import type { SimulationWorkerResponse } from "@/components/notebook/simulation/worker-messages";

// The worker entry talks to its global scope; stand in for it.
const posted: SimulationWorkerResponse[] = [];
const scope = globalThis as unknown as { postMessage: (m: SimulationWorkerResponse) => void; onmessage: ((event: { data: unknown }) => void) | null };
const previous = scope.postMessage;
scope.postMessage = (message) => posted.push(message);
await import("@/components/notebook/simulation/simulation.worker");
afterAll(() => {
  scope.postMessage = previous;
  scope.onmessage = null;
});

const pendulum = {
  title: "Hook block on a cable",
  coordinates: [{ name: "theta", unit: "rad" }],
  parameters: [
    { name: "m", unit: "kg", value: 40 },
    { name: "l", unit: "m", value: 3.5 },
    { name: "g", unit: "m/s^2", value: 9.81 },
  ],
  definitions: [
    { name: "xb", expr: "l*sin(theta)" },
    { name: "yb", expr: "-l*cos(theta)" },
    { name: "yb2", expr: "2*yb" },
  ],
  kinetic: "1/2*m*(xb'^2 + yb'^2)",
  potential: "m*g*yb",
};

async function answer(id: string): Promise<SimulationWorkerResponse> {
  for (let i = 0; i < 400; i++) {
    const found = posted.find((m) => m.id === id && m.type !== "progress");
    if (found) return found;
    await new Promise((resolve) => setTimeout(resolve, 25));
  }
  throw new Error("no answer from the worker");
}

describe("simulation cell worker", () => {
  it("derives the model, integrates it and evaluates the marked points along the trajectory", async () => {
    scope.onmessage!({
      data: {
        type: "start",
        id: "a",
        job: {
          model: pendulum,
          settings: { initialCoordinates: { theta: 0.4 }, endTime: 5, outputStep: 0.05, relativeTolerance: 1e-10, absoluteTolerance: 1e-12 },
          points: [
            { x: "xb", y: "yb2" },
            { x: "theta", y: "0" },
          ],
          smallOscillation: { expectedFrequency: Math.sqrt(9.81 / 3.5), equilibrium: { theta: 0 }, modeShape: [1] },
        },
      },
    });
    const message = await answer("a");
    expect(message.type).toBe("result");
    if (message.type !== "result" || message.outcome.kind !== "simulate") return;
    const { result, energyCheck } = message.outcome;
    expect(result.status).toBe("completed");
    // No dissipation or force: the derivation finds the energy function conserved, and it is checked.
    expect(energyCheck?.relativeDrift).toBeLessThan(1e-8);
    const [track] = message.points!;
    expect(track!.xName).toBe("xb");
    expect(track!.x).toHaveLength(result.trajectory.times.length);
    // Geometry of the definitions themselves: x = l sin θ, and yb2 = 2·(−l cos θ) refers to another definition.
    result.trajectory.coordinates[0]!.forEach((theta, k) => {
      expect(track!.x[k]).toBeCloseTo(3.5 * Math.sin(theta), 12);
      expect(track!.y[k]).toBeCloseTo(-7 * Math.cos(theta), 12);
    });
    // A coordinate and the fixed zero are drawn as they are (a support moving along a track).
    const support = message.points![1]!;
    expect(support.xName).toBe("theta");
    expect(Array.from(support.x)).toEqual(Array.from(result.trajectory.coordinates[0]!));
    expect(support.y.every((v) => v === 0)).toBe(true);
    // Small swing against ω = √(g/l), the linearized pendulum (a fact of the trade).
    expect(message.smallOscillation?.passed).toBe(true);
  });

  it("names the model field when the model is invalid", async () => {
    scope.onmessage!({
      data: {
        type: "start",
        id: "b",
        job: { model: { ...pendulum, potential: "m*g*zz" }, settings: { initialCoordinates: {}, endTime: 1, outputStep: 0.1 }, points: [] },
      },
    });
    const message = await answer("b");
    expect(message).toMatchObject({ type: "error", error: { name: "ModelError", field: "potential" } });
  });
});
