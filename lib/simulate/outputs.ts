import type { OutputSpec } from "./specs";
import { compileLocated, variableNames, type ExpressionCompiler, type ExpressionEvaluator, type MechanicalSystem } from "./system";

/**
 * Outputs: named quantities the engineer sizes parts from (a rope tension, a
 * pin load, the acceleration an occupant feels), evaluated at every output
 * point of a run from the state, the accelerations and the multipliers.
 */

/** The largest magnitude a series reaches, with its sign, and when. */
export interface Peak {
  value: number;
  time: number;
}

export interface OutputSeries {
  name: string;
  /** As given with the output; null when none was. */
  unit: string | null;
  values: Float64Array;
  /** Null for an empty run. */
  peak: Peak | null;
}

/**
 * The value of largest magnitude in a series and the time it occurs (the
 * first such time). Non-finite values are skipped.
 *
 * @example peakOf([0, 1, 2], [0.5, -3, 2]) // { value: -3, time: 1 }
 */
export function peakOf(times: ArrayLike<number>, values: ArrayLike<number>): Peak | null {
  let best: Peak | null = null;
  for (let k = 0; k < values.length; k++) {
    const v = values[k]!;
    if (!Number.isFinite(v)) continue;
    if (best === null || Math.abs(v) > Math.abs(best.value)) best = { value: v, time: times[k]! };
  }
  return best;
}

/**
 * The variables outputs are compiled over: the system's packed layout
 * [q, q', t, u, p] followed by the accelerations q'' and the multipliers.
 */
export function outputVariables(system: Pick<MechanicalSystem, "coordinateNames" | "inputNames" | "parameters">, multiplierNames: readonly string[]): string[] {
  return [...variableNames(system), ...system.coordinateNames.map((q) => `${q}''`), ...multiplierNames];
}

/**
 * Compiles the system's outputs; a refused expression throws a
 * `SimulationSetupError` naming the output (`outputs.rope_tension`).
 */
export function compileOutputs(
  system: Pick<MechanicalSystem, "coordinateNames" | "inputNames" | "parameters" | "outputs">,
  multiplierNames: readonly string[],
  compile?: ExpressionCompiler,
): ExpressionEvaluator | null {
  const outputs: readonly OutputSpec[] = system.outputs ?? [];
  if (outputs.length === 0) return null;
  return compileLocated(
    outputs.map((o) => o.expr),
    outputs.map((o) => `outputs.${o.name}`),
    outputVariables(system, multiplierNames),
    compile,
  );
}
