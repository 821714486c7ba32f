/**
 * Validation of the simulation cell's settings (their stored shape and
 * defaults are part of the document schema: `SimulationSettings`) into the
 * numbers the integrator and the runs API take.
 */
import { parseParameterValue, type DocumentSymbols, type PointPair, type SimulationSettings } from "@/lib/notebook/document";
import type { SimulationSettingsMessage } from "@/lib/simulate";

/** Most output points an interactive run asks for. */
export const MAX_OUTPUT_POINTS = 200_000;

/** Settings ready for the worker and the runs API (same names as the runs schema). */
export interface RunRequest extends SimulationSettingsMessage {
  initialCoordinates: Record<string, number>;
  initialRates: Record<string, number>;
  startTime: number;
  endTime: number;
  outputStep: number;
  relativeTolerance: number;
  absoluteTolerance: number;
  inputs: Record<string, string>;
  parameters: Record<string, number>;
}

export type SettingsValidation = { ok: true; request: RunRequest; points: PointPair[] } | { ok: false; errors: Record<string, string> };

/**
 * Checks the settings against the derivation's symbols. Error keys name the
 * field the form shows them under (`initialCoordinates.theta`, `endTime`, …).
 */
export function validateSettings(settings: SimulationSettings, symbols: DocumentSymbols): SettingsValidation {
  const errors: Record<string, string> = {};
  const numberField = (key: string, value: string, { required = false, blankAs }: { required?: boolean; blankAs?: number } = {}) => {
    const parsed = parseParameterValue(value);
    if (parsed === null) {
      errors[key] = `"${value.trim()}" is not a number.`;
      return NaN;
    }
    if (parsed === undefined) {
      if (required) errors[key] = "Required.";
      return blankAs ?? NaN;
    }
    return parsed;
  };

  if (symbols.coordinates.length === 0) errors._ = "Add a coordinate before simulating.";
  const initialCoordinates: Record<string, number> = {};
  const initialRates: Record<string, number> = {};
  for (const name of symbols.coordinates) {
    initialCoordinates[name] = numberField(`initialCoordinates.${name}`, settings.initialCoordinates[name] ?? "", { blankAs: 0 });
    initialRates[name] = numberField(`initialRates.${name}`, settings.initialRates[name] ?? "", { blankAs: 0 });
  }
  const startTime = numberField("startTime", settings.startTime, { blankAs: 0 });
  const endTime = numberField("endTime", settings.endTime, { required: true });
  const outputStep = numberField("outputStep", settings.outputStep, { required: true });
  const tolerance = numberField("tolerance", settings.tolerance, { blankAs: 1e-8 });
  if (!errors.endTime && !errors.startTime && !(endTime > startTime)) errors.endTime = "Must be after the start time.";
  if (!errors.outputStep && !(outputStep > 0)) errors.outputStep = "Must be positive.";
  if (!errors.endTime && !errors.outputStep && !errors.startTime && (endTime - startTime) / outputStep > MAX_OUTPUT_POINTS) {
    errors.outputStep = `Too fine: at most ${MAX_OUTPUT_POINTS.toLocaleString("en-GB")} output points.`;
  }
  if (!errors.tolerance && !(tolerance >= 1e-14 && tolerance <= 1e-2)) errors.tolerance = "Between 1e-14 and 1e-2.";

  const inputs: Record<string, string> = {};
  for (const name of symbols.inputs) {
    const expr = (settings.inputs[name] ?? "").trim();
    if (expr !== "") inputs[name] = expr;
  }
  const parameters: Record<string, number> = {};
  for (const [name, value] of Object.entries(settings.parameterOverrides)) {
    if (!symbols.parameters.includes(name)) continue;
    const parsed = numberField(`parameterOverrides.${name}`, value);
    if (!Number.isNaN(parsed)) parameters[name] = parsed;
  }
  const points = settings.points.filter((p) => p.x.trim() !== "" || p.y.trim() !== "");
  points.forEach((p, i) => {
    for (const axis of ["x", "y"] as const) {
      const name = p[axis].trim();
      if (name !== "0" && !symbols.definitions.includes(name) && !symbols.coordinates.includes(name)) {
        errors[`points.${i}.${axis}`] = name === "" ? "Choose a definition or coordinate." : `"${name}" is not a definition or coordinate.`;
      }
    }
  });

  if (Object.keys(errors).length > 0) return { ok: false, errors };
  return {
    ok: true,
    points: points.map((p) => ({ x: p.x.trim(), y: p.y.trim() })),
    request: {
      initialCoordinates,
      initialRates,
      startTime,
      endTime,
      outputStep,
      // The absolute tolerance follows the relative one two decades down, as the library's defaults do.
      relativeTolerance: tolerance,
      absoluteTolerance: Math.max(1e-16, tolerance * 1e-2),
      inputs,
      parameters,
    },
  };
}
