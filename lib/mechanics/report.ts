import type { ConstraintKind } from "./constraints";
import { deriveModel } from "./derive";
import { printDerivation } from "./print";
import { checkModelUnits } from "./units";
import { validateModel } from "./validate-model";

/**
 * A model's equations as the derivation CLI prints them and the public API
 * serves them: plain data, expressions in the input syntax (`q'` rate, `q''`
 * acceleration, canonical form), LaTeX of the display form without the "= 0".
 */
export interface DerivationReport {
  coordinates: string[];
  equations: { coordinate: string; residual: string; latex: string }[];
  /** M[i][j] = ∂residual_i/∂q_j''; symmetric. */
  massMatrix: string[][];
  /** f with residual = M q'' − f. */
  forcing: string[];
  /** The energy function h = Σ q'·∂L/∂q' − L. */
  energy: string;
  conserved: { name: string; expr: string; reason: string }[];
  /**
   * Constraints with their solved multipliers: λ (position) or μ (rate) in
   * coordinates, rates, t, parameters and inputs, or null where no closed form
   * was produced. Absent from the report of a model without constraints.
   */
  constraints?: { name: string; kind: ConstraintKind; expr: string; multiplier: string | null }[];
  /** The model's outputs, definitions expanded. Absent without outputs. */
  outputs?: { name: string; expr: string; unit: string }[];
  /** In-process derivation time (ms). */
  timingMs: number;
}

/**
 * Validates `raw` as a model file, checks its units before and after deriving,
 * and reports the equations. Throws ModelError (invalid model, unit mismatch)
 * and EngineLimitError like `deriveModel`.
 *
 * @example derivationReport(JSON.parse(text)).equations[0].residual // "m*x'' + k*x"
 */
export function derivationReport(raw: unknown): DerivationReport {
  const model = validateModel(raw);
  checkModelUnits(model);
  const result = deriveModel(model);
  checkModelUnits(model, result.equations);
  // The edge: expressions printed once, text in the input syntax and LaTeX of the display form.
  const printed = printDerivation(result);
  return {
    coordinates: printed.coordinates,
    equations: printed.equations.map((e) => ({ coordinate: e.coordinate, residual: e.residual, latex: e.latex })),
    massMatrix: printed.massMatrix,
    forcing: printed.forcing,
    energy: printed.energy,
    conserved: printed.conserved.map(({ name, expr, reason }) => ({ name, expr, reason })),
    ...(printed.constraints.length === 0
      ? {}
      : { constraints: printed.constraints.map(({ name, kind, expr, multiplier }) => ({ name, kind, expr, multiplier })) }),
    ...(printed.outputs.length === 0 ? {} : { outputs: printed.outputs.map(({ name, expr, unit }) => ({ name, expr, unit })) }),
    timingMs: Math.round(result.timing.totalMs * 100) / 100,
  };
}
