import { describe, expect, it } from "vitest";
import { compileExpressions } from "@/lib/mechanics/compile";
import { chooseMethod, integrate, type SimulationSettings } from "@/lib/simulate/integrate";
import { SimulationSetupError } from "@/lib/simulate/errors";
import { systemFromMassMatrixForm, type ExpressionCompiler } from "@/lib/simulate/system";
import { largestDifference, templateAndDemoForms } from "./models";

// Today's path before this change: the tape evaluator and odex.
const tape: ExpressionCompiler = (expressions, variables, constants) => compileExpressions(expressions, variables, { constants, backend: "tape" });

const TOLERANCE = 1e-9;

describe("the method setting", () => {
  it("resolves auto to DOP853 over the tolerances the settings allow, and keeps an explicit choice", () => {
    expect(chooseMethod(undefined, 1e-8)).toBe("rk853");
    expect(chooseMethod("auto", 1e-12)).toBe("rk853");
    expect(chooseMethod("extrapolation", 1e-8)).toBe("extrapolation");
    expect(chooseMethod("rk853", 1e-6)).toBe("rk853");
  });

  it("refuses an unknown method with a setup error naming the field", () => {
    const { form } = templateAndDemoForms()[0]!;
    const run = () => integrate(systemFromMassMatrixForm(form), { initialCoordinates: [0.1], endTime: 1, outputStep: 0.1, method: "euler" as never });
    expect(run).toThrow(SimulationSetupError);
    expect(run).toThrow(/method/);
  });
});

describe("simulation paths agree on every template and demo model", () => {
  for (const { name, form } of templateAndDemoForms()) {
    it(name, () => {
      const settings: SimulationSettings = {
        initialCoordinates: form.coordinates.map(() => 0.3),
        initialRates: form.coordinates.map(() => 0.1),
        endTime: 3,
        outputStep: 0.02,
        relativeTolerance: TOLERANCE,
        absoluteTolerance: TOLERANCE,
        timeLimitMs: 60_000,
      };
      const today = integrate(systemFromMassMatrixForm(form, tape), { ...settings, method: "extrapolation" });
      const compiled = systemFromMassMatrixForm(form);
      const sameMethod = integrate(compiled, { ...settings, method: "extrapolation" });
      const rk = integrate(compiled, settings);
      for (const run of [today, sameMethod, rk]) expect(run.status, run.failure?.message).toBe("completed");
      expect(rk.stats.method).toBe("rk853");
      // The WebAssembly module computes what the tape computes, operation for operation: the same run.
      expect(largestDifference(sameMethod, today)).toBeLessThanOrEqual(1e-12);
      // DOP853 on the compiled module against today's path: within the requested tolerance (relative to the
      // series' size) on every coordinate, rate, energy, output and multiplier (the largest, 7.7e-10, on the chain).
      expect(largestDifference(rk, today)).toBeLessThanOrEqual(TOLERANCE);
    });
  }
});
