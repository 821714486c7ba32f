import { describe, expect, it } from "vitest";
import { integrate, type SimulationSettings } from "@/lib/simulate/integrate";
import { emitStepModule } from "@/lib/simulate/dop853-wasm";
import { compileExpressions } from "@/lib/mechanics/compile";
import { systemFromMassMatrixForm, type MassMatrixForm, type MechanicalSystem } from "@/lib/simulate/system";
import { largestDifference, templateAndDemoForms } from "./models";

/** The same system without the step kernel: the solver's JavaScript path, stage by stage. */
function withoutStepKernel(system: MechanicalSystem): MechanicalSystem {
  const specialize = system.specialize!;
  return {
    ...system,
    specialize: (values) => {
      const { massForcing, energy, massForcingKernel } = specialize(values);
      return { massForcing, ...(energy ? { energy } : {}), ...(massForcingKernel ? { massForcingKernel } : {}) };
    },
  };
}

const settingsFor = (form: MassMatrixForm): SimulationSettings => ({
  initialCoordinates: form.coordinates.map(() => 0.3),
  initialRates: form.coordinates.map(() => 0.1),
  endTime: 3,
  outputStep: 0.02,
  relativeTolerance: 1e-9,
  absoluteTolerance: 1e-9,
  timeLimitMs: 60_000,
  method: "rk853",
});

describe("DOP853 steps in a generated WebAssembly module", () => {
  it("emits a module the engine validates, exporting the step, the acceptance and the dense output", () => {
    const compiled = compileExpressions(["m", "0", "0", "m*l^2", "-k*x", "-m*g*l*sin(th)"], ["x", "th", "x'", "th'", "t"], {
      constants: { m: 2, l: 0.5, k: 40, g: 9.81 },
    });
    const { bytes, imports } = emitStepModule({ ...compiled.kernel!.source, n: 2, inputCount: 0 });
    expect(WebAssembly.validate(bytes as Uint8Array<ArrayBuffer>)).toBe(true);
    expect(imports).toEqual(["sin"]);
    const names = WebAssembly.Module.exports(new WebAssembly.Module(bytes as Uint8Array<ArrayBuffer>)).map((e) => e.name);
    expect(names.sort()).toEqual(["accept", "dense", "memory", "step"]);
  });

  // The module repeats the JavaScript solver's arithmetic operation for operation; only the linear solve
  // differs (elimination without row exchanges instead of partial pivoting), by roundoff.
  for (const { name, form } of templateAndDemoForms().filter(({ form }) => !form.constraints?.length)) {
    it(`takes the JavaScript solver's steps on ${name}`, () => {
      const system = systemFromMassMatrixForm(form);
      const settings = settingsFor(form);
      const fast = integrate(system, settings);
      const reference = integrate(withoutStepKernel(system), settings);
      expect(fast.status, fast.failure?.message).toBe("completed");
      expect(reference.status).toBe("completed");
      expect(fast.stats.acceptedSteps).toBe(reference.stats.acceptedSteps);
      expect(fast.stats.rhsEvaluations).toBe(reference.stats.rhsEvaluations);
      expect(largestDifference(fast, reference)).toBeLessThanOrEqual(1e-11);
    });
  }

  it("writes each run's parameter values into the system's module, and folds them in once they repeat", () => {
    // A pendulum whose length and gravity change from run to run (a study, a fit), then repeat.
    const form: MassMatrixForm = {
      coordinates: ["th"],
      parameters: [
        { name: "m", value: 40 },
        { name: "l", value: 3 },
        { name: "g", value: 9.81 },
      ],
      massMatrix: [["m*l^2"]],
      forcing: ["-m*g*l*sin(th)"],
    };
    const system = systemFromMassMatrixForm(form);
    const reference = withoutStepKernel(system);
    const base: SimulationSettings = { ...settingsFor(form), initialCoordinates: [0.4], initialRates: [0], endTime: 6 };
    for (const parameters of [
      { m: 40, l: 3, g: 9.81 },
      { m: 40, l: 5, g: 9.81 },
      { m: 40, l: 5, g: 1.62 },
      { m: 40, l: 5, g: 1.62 },
      { m: 40, l: 5, g: 1.62 },
      { m: 40, l: 5, g: 1.62 },
    ]) {
      const settings = { ...base, parameters };
      const fast = integrate(system, settings);
      const slow = integrate(reference, settings);
      expect(fast.status).toBe("completed");
      expect(largestDifference(fast, slow)).toBeLessThanOrEqual(1e-11);
    }
    // Small swings: the period is 2π√(l/g) (fact of the trade), 11.0 s for l = 5 m on the Moon's 1.62 m/s²,
    // so 6 s is a little past half a swing: the angle has crossed zero and is near −0.4 rad.
    const moon = integrate(system, { ...base, parameters: { m: 40, l: 5, g: 1.62 } });
    expect(moon.trajectory.coordinates[0]!.at(-1)!).toBeLessThan(-0.35);
  });

  it("reads time-varying inputs at every stage, as the JavaScript path does", () => {
    // A cart (mass 3 kg) with a pendulum (1 kg, 0.8 m) pushed by a force u(t).
    const form: MassMatrixForm = {
      coordinates: ["x", "th"],
      inputs: ["u"],
      parameters: [
        { name: "M", value: 3 },
        { name: "m", value: 1 },
        { name: "l", value: 0.8 },
        { name: "g", value: 9.81 },
      ],
      massMatrix: [
        ["M + m", "m*l*cos(th)"],
        ["m*l*cos(th)", "m*l^2"],
      ],
      forcing: ["u + m*l*th'^2*sin(th)", "-m*g*l*sin(th)"],
    };
    const system = systemFromMassMatrixForm(form);
    const settings: SimulationSettings = { ...settingsFor(form), endTime: 5, inputs: { u: "4*sin(2*t)*exp(-t/3)" } };
    const fast = integrate(system, settings);
    const reference = integrate(withoutStepKernel(system), settings);
    expect(fast.status).toBe("completed");
    expect(fast.stats.rhsEvaluations).toBe(reference.stats.rhsEvaluations);
    expect(largestDifference(fast, reference)).toBeLessThanOrEqual(1e-11);
    // And the input mattered: without it the cart stays where it is.
    const unforced = integrate(system, { ...settings, inputs: { u: "0" }, initialCoordinates: [0, 0], initialRates: [0, 0] });
    expect(Math.max(...unforced.trajectory.coordinates[0]!.map(Math.abs))).toBe(0);
    expect(Math.max(...fast.trajectory.coordinates[0]!.map(Math.abs))).toBeGreaterThan(0.01);
  });

  it("hands a step it cannot take to the JavaScript path, which reports a singular mass matrix the same way", () => {
    // M = 1 − x² vanishes at x = 1, which a constant push reaches.
    const form: MassMatrixForm = { coordinates: ["x"], parameters: [], massMatrix: [["1 - x^2"]], forcing: ["1"] };
    const system = systemFromMassMatrixForm(form);
    const settings: SimulationSettings = { ...settingsFor(form), initialCoordinates: [0], initialRates: [0], endTime: 5 };
    const fast = integrate(system, settings);
    const reference = integrate(withoutStepKernel(system), settings);
    expect(reference.status).toBe("failed");
    expect(fast.status).toBe("failed");
    expect(fast.failure!.reason).toBe(reference.failure!.reason);
    expect(fast.failure!.timeReached).toBe(reference.failure!.timeReached);
    expect(fast.failure!.message).toBe(reference.failure!.message);
  });

  it("leaves a mass matrix that is not positive definite to the pivoting solve, with the same result", () => {
    // M = −1: invertible but negative; the module's elimination refuses it and every step runs in JavaScript.
    const form: MassMatrixForm = { coordinates: ["x"], parameters: [], massMatrix: [["-1"]], forcing: ["x"] };
    const system = systemFromMassMatrixForm(form);
    const settings: SimulationSettings = { ...settingsFor(form), initialCoordinates: [1], initialRates: [0], endTime: 2 };
    const fast = integrate(system, settings);
    const reference = integrate(withoutStepKernel(system), settings);
    expect(fast.status).toBe("completed");
    // x'' = −x: x = cos t (fact of the trade).
    expect(fast.trajectory.coordinates[0]!.at(-1)).toBeCloseTo(Math.cos(2), 7);
    expect(largestDifference(fast, reference)).toBe(0);
  });

  it("reports a non-finite acceleration as the JavaScript path does", () => {
    const form: MassMatrixForm = { coordinates: ["x"], parameters: [], massMatrix: [["1"]], forcing: ["1/(1 - x)^3"] };
    const system = systemFromMassMatrixForm(form);
    const settings: SimulationSettings = { ...settingsFor(form), initialCoordinates: [0], initialRates: [0], endTime: 5 };
    const fast = integrate(system, settings);
    const reference = integrate(withoutStepKernel(system), settings);
    expect(fast.status).toBe("failed");
    expect(fast.failure!.reason).toBe(reference.failure!.reason);
    // x'' = 1/(1 − x)³ from rest reaches x = 1 at t = 1 exactly (energy: x'² = 1/(1 − x)² − 1, so
    // t = ∫ (1 − x)/√(1 − (1 − x)²) dx over [0, 1] = 1); both stop there, within roundoff of each other.
    expect(fast.failure!.timeReached).toBeCloseTo(1, 9);
    expect(fast.failure!.timeReached).toBeCloseTo(reference.failure!.timeReached, 12);
  });
});
