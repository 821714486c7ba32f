/**
 * Units of the multiplier and residual columns of a trajectory CSV, worked
 * out from the model: each multiplier's from the engine, each residual's from
 * its constraint's expression. Framework-free; used by the browser's
 * simulation worker and the server's simulation task alike.
 */
import { formatDimension, unitOfExpression, type ConstraintResult, type Model } from "../mechanics";
import type { ExtraColumnUnits } from "../simulate";

/** A unit for a CSV header: the named unit when there is one (`N`), else the base-symbol form. */
function headerUnit(formatted: string): string {
  const named = /\(([^)]+)\)$/.exec(formatted);
  return named ? named[1]! : formatted;
}

/** A unit that cannot be worked out is left out (the CSV then writes 1). */
export function constraintColumnUnits(
  model: Pick<Model, "coordinates" | "parameters" | "inputs">,
  constraints: readonly ConstraintResult[],
): Required<ExtraColumnUnits> & { multipliers: Record<string, string>; residuals: Record<string, string> } {
  const symbolUnits: Record<string, string> = {};
  for (const list of [model.coordinates, model.parameters, model.inputs ?? []]) for (const entry of list) symbolUnits[entry.name] = entry.unit;
  const multipliers: Record<string, string> = {};
  const residuals: Record<string, string> = {};
  for (const c of constraints) {
    if (c.unit) multipliers[c.symbol] = headerUnit(c.unit);
    try {
      const dimension = unitOfExpression(c.expr, symbolUnits, c.name);
      if (dimension) residuals[c.name] = headerUnit(formatDimension(dimension));
    } catch {
      // The engine reports unit problems with the constraint itself; the column keeps no unit.
    }
  }
  return { multipliers, residuals };
}
