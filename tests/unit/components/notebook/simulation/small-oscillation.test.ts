/**
 * The simulation cell's small-amplitude check on the demo models: which mode
 * it picks from the linearization, and that the nonlinear swing then agrees.
 */
import { describe, expect, it } from "vitest";
import { smallOscillationOf } from "@/components/notebook/simulation/small-oscillation";
import { deriveModel } from "@/lib/mechanics";
import { checkSmallOscillation, explainSmallOscillation, systemFromMassMatrixForm } from "@/lib/simulate";
import { evaluateModel } from "@/lib/evaluation/evaluate";
import { templateModel } from "@/lib/notebook/templates";
import { demoModel, evaluateDemo, inProcessRunner } from "../../../evaluation/in-process";

/** The system the simulation worker builds from a model (simulation.worker.ts). */
function simulatedSystem(titleStart: string) {
  const model = demoModel(titleStart);
  const derived = deriveModel(model);
  return systemFromMassMatrixForm({
    coordinates: derived.coordinates,
    inputs: (model.inputs ?? []).map((input) => input.name),
    parameters: model.parameters.map((p) => ({ name: p.name, value: p.value, unit: p.unit })),
    massMatrix: derived.massMatrix,
    forcing: derived.forcing,
    energy: derived.energy,
  });
}

describe("small-amplitude check from the notebook's results", () => {
  it("crane trolley: checks the swing of the marginal hanging point, timing θ (x drifts in the rigid mode), against the damped frequency", async () => {
    const results = await evaluateDemo("Gantry crane: trolley");
    const job = smallOscillationOf(results, results.coordinates)!;
    // Pendulum on a free trolley: ω² = (g/l)(1 + m/M) (fact of the trade).
    expect(job.expectedFrequency).toBeCloseTo(Math.sqrt((9.81 / 6.5) * (1 + 2000 / 850)), 10);
    expect(job.coordinate).toBe("theta");
    expect(job.eigenvalue!.re).toBeLessThan(0);
    const report = checkSmallOscillation(simulatedSystem("Gantry crane: trolley"), job);
    expect(report.passed).toBe(true);
    expect(report.comparedFrequency).toBe(job.eigenvalue!.im);
    expect(explainSmallOscillation(report)).toMatch(/^They agree/);
  });

  it("seat rig: the damped swing agrees with the linearization (it read 5 % off against the undamped frequency)", async () => {
    const results = await evaluateDemo("Seat-suspension");
    const job = smallOscillationOf(results, results.coordinates)!;
    const report = checkSmallOscillation(simulatedSystem("Seat-suspension"), job);
    expect(report.passed).toBe(true);
    // ζ = c/(2√(k m)) = 0.325, so ω_d/ω = √(1 − ζ²) = 0.946 (Thomson & Dahleh, Theory of Vibration with Applications, 5th ed., §2.6 — from memory).
    expect(report.comparedFrequency / report.expectedFrequency).toBeCloseTo(Math.sqrt(1 - (1300 / (2 * Math.sqrt(42000 * 95))) ** 2), 10);
  });

  it("undamped hook block: compares with the natural frequency itself", async () => {
    const model = templateModel("single-pendulum");
    const { result } = await evaluateModel(inProcessRunner, model, { linearization: { equilibriumIndex: 0, inputValues: {} }, codeLanguages: [] });
    expect(result.linearization!.selected!.stability).toBe("stable");
    const job = smallOscillationOf(result, result.coordinates)!;
    expect(job.eigenvalue).toBeUndefined();
    // Simple pendulum ω = √(g/l), l = 3.5 m (fact of the trade).
    expect(job.expectedFrequency).toBeCloseTo(Math.sqrt(9.81 / 3.5), 10);
    const derived = deriveModel(model);
    const system = systemFromMassMatrixForm({
      coordinates: derived.coordinates,
      parameters: model.parameters.map((p) => ({ name: p.name, value: p.value })),
      massMatrix: derived.massMatrix,
      forcing: derived.forcing,
    });
    const report = checkSmallOscillation(system, job);
    expect(report.passed).toBe(true);
    expect(explainSmallOscillation(report)).not.toContain("Damping");
  });

  it("makes no check about an unstable equilibrium", async () => {
    const results = await evaluateDemo("Gantry crane: trolley", 1);
    expect(smallOscillationOf(results, results.coordinates)).toBeNull();
  });
});
