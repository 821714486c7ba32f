import { exportCode, type CodeExportInput, type CodeLanguage } from "../codegen";
import type { MassMatrixSystem } from "../compile";
import { deriveModel, type DeriveOptions } from "../derive";
import { findEquilibria, type EquilibriumOptions } from "../equilibria";
import { linearizeAbout, type OperatingPoint } from "../linearize";
import { printDerivation } from "../print";
import { derivationReport } from "../report";
import { checkModelUnits } from "../units";
import { validateModel } from "../validate-model";

/**
 * The named tasks the engine worker runs. Each takes the JSON payload the
 * pool sent and returns a structured-cloneable result; errors are thrown as
 * the engine's typed errors. To add a task, add an entry here (or register
 * one at run time with `registerEngineTask` in a worker entry of your own).
 *
 * The thread boundary is where results leave the engine: the derivation
 * crosses it printed (text and LaTeX, printDerivation), and M and f come back
 * as text, parsed once on arrival.
 */
export type EngineTask = (payload: unknown) => unknown;

export const ENGINE_TASKS: Record<string, EngineTask> = {
  /** { model, options? } → PrintedDerivation; validates the model and checks its units first and after. */
  derive(payload) {
    const { model: raw, options } = payload as { model: unknown; options?: DeriveOptions & { units?: boolean } };
    const model = validateModel(raw);
    const units = options?.units !== false;
    if (units) checkModelUnits(model);
    const result = deriveModel(model, options);
    if (units) checkModelUnits(model, result.equations);
    return printDerivation(result);
  },
  /** { model } → DerivationReport: the derivation CLI's output (the public API serves it). */
  report(payload) {
    const { model } = payload as { model: unknown };
    return derivationReport(model);
  },
  /** { model } → { ok: true }; throws ModelError on a unit problem. */
  checkUnits(payload) {
    const { model: raw, equations } = payload as { model: unknown; equations?: { coordinate: string; residual: string }[] };
    checkModelUnits(validateModel(raw), equations);
    return { ok: true };
  },
  /** { system, point } → Linearization */
  linearize(payload) {
    const { system, point } = payload as { system: MassMatrixSystem; point: OperatingPoint };
    return linearizeAbout(system, point);
  },
  /** { system, options? } → Equilibrium[] */
  equilibria(payload) {
    const { system, options } = payload as { system: MassMatrixSystem; options?: EquilibriumOptions };
    return findEquilibria(system, options);
  },
  /** { input, language } → { code } */
  exportCode(payload) {
    const { input, language } = payload as { input: CodeExportInput; language: CodeLanguage };
    return { code: exportCode(input, language) };
  },
};
