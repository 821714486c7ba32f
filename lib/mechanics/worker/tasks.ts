import { exportCode, type CodeExportInput, type CodeLanguage } from "../codegen";
import { deriveModel, type DeriveOptions } from "../derive";
import { findEquilibria, type EquilibriumOptions } from "../equilibria";
import { linearizeAbout, type AnalysisSystem, type OperatingPoint } from "../linearize";
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
export type EngineTask = (payload: unknown, context?: EngineTaskContext) => unknown;

/** What a task may use besides its payload: reporting progress to whoever runs it (a queued job's page). */
export interface EngineTaskContext {
  /** The fraction done, in [0, 1]; cheap to call, the pool passes it on as it comes. */
  progress(fraction: number): void;
}

/**
 * The fields of a task's payload. A payload that is not an object (null, a
 * number, an array) reads as one without fields, so the model checks below
 * refuse it with a ModelError instead of a TypeError escaping the worker.
 */
function fieldsOf(payload: unknown): Record<string, unknown> {
  return payload !== null && typeof payload === "object" && !Array.isArray(payload) ? (payload as Record<string, unknown>) : {};
}

/** Derive options from a payload; anything but an object means the defaults. */
function deriveOptionsOf(value: unknown): DeriveOptions & { units?: boolean } {
  return fieldsOf(value) as DeriveOptions & { units?: boolean };
}

export const ENGINE_TASKS: Record<string, EngineTask> = {
  /** { model, options? } → PrintedDerivation; validates the model and checks its units first and after. */
  derive(payload) {
    const { model: raw, options: rawOptions } = fieldsOf(payload);
    const model = validateModel(raw);
    const options = deriveOptionsOf(rawOptions);
    const units = options.units !== false;
    if (units) checkModelUnits(model);
    const result = deriveModel(model, options);
    if (units) checkModelUnits(model, result.equations);
    return printDerivation(result);
  },
  /** { model } → DerivationReport: the derivation CLI's output (the public API serves it). */
  report(payload) {
    return derivationReport(fieldsOf(payload).model);
  },
  /** { model } → { ok: true }; throws ModelError on a unit problem. */
  checkUnits(payload) {
    const { model: raw, equations } = fieldsOf(payload) as { model: unknown; equations?: { coordinate: string; residual: string }[] };
    checkModelUnits(validateModel(raw), Array.isArray(equations) ? equations : undefined);
    return { ok: true };
  },
  /** { system, point } → Linearization */
  linearize(payload) {
    const { system, point } = payload as { system: AnalysisSystem; point: OperatingPoint };
    return linearizeAbout(system, point);
  },
  /** { system, options? } → Equilibrium[] */
  equilibria(payload) {
    const { system, options } = payload as { system: AnalysisSystem; options?: EquilibriumOptions };
    return findEquilibria(system, options);
  },
  /** { input, language } → { code } */
  exportCode(payload) {
    const { input, language } = payload as { input: CodeExportInput; language: CodeLanguage };
    return { code: exportCode(input, language) };
  },
};
