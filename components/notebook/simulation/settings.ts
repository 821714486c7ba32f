/**
 * The simulation cell's settings as stored in the document (text as typed, so
 * a half-written number is never lost) and their validation into the numbers
 * the integrator and the runs API take.
 */
import type { DocumentSymbols } from "@/lib/notebook/document";
import type { SimulationSettingsMessage } from "@/lib/simulate/worker-protocol";

export interface PointPair {
  /** Names giving x and y of one drawn point: a definition, a coordinate, or "0" for a fixed zero. */
  x: string;
  y: string;
}

export interface SimulationCellSettings {
  initialCoordinates: Record<string, string>;
  initialRates: Record<string, string>;
  startTime: string;
  endTime: string;
  outputStep: string;
  tolerance: string;
  /** Inputs as expressions of t and the parameters. */
  inputs: Record<string, string>;
  /** Parameter values replacing the Parameters cell for this simulation only. */
  parameterOverrides: Record<string, string>;
  points: PointPair[];
}

export const DEFAULT_SETTINGS: SimulationCellSettings = {
  initialCoordinates: {},
  initialRates: {},
  startTime: "0",
  endTime: "10",
  outputStep: "0.01",
  tolerance: "1e-8",
  inputs: {},
  parameterOverrides: {},
  points: [],
};

/** Most output points an interactive run asks for. */
export const MAX_OUTPUT_POINTS = 200_000;

function record(value: unknown): Record<string, string> {
  if (!value || typeof value !== "object" || Array.isArray(value)) return {};
  return Object.fromEntries(Object.entries(value).filter((entry): entry is [string, string] => typeof entry[1] === "string"));
}

function text(value: unknown, fallback: string): string {
  return typeof value === "string" ? value : fallback;
}

/** Reads the cell's free-form settings, filling what is missing with defaults. */
export function readSettings(raw: Record<string, unknown>): SimulationCellSettings {
  const points = Array.isArray(raw.points)
    ? raw.points.flatMap((p: unknown) => {
        if (!p || typeof p !== "object") return [];
        const { x, y } = p as Record<string, unknown>;
        return typeof x === "string" && typeof y === "string" ? [{ x, y }] : [];
      })
    : [];
  return {
    initialCoordinates: record(raw.initialCoordinates),
    initialRates: record(raw.initialRates),
    startTime: text(raw.startTime, DEFAULT_SETTINGS.startTime),
    endTime: text(raw.endTime, DEFAULT_SETTINGS.endTime),
    outputStep: text(raw.outputStep, DEFAULT_SETTINGS.outputStep),
    tolerance: text(raw.tolerance, DEFAULT_SETTINGS.tolerance),
    inputs: record(raw.inputs),
    parameterOverrides: record(raw.parameterOverrides),
    points,
  };
}

const NUMBER_TEXT = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/;

/** A number as typed; `undefined` when blank, `null` when not a number. */
export function parseNumber(value: string): number | undefined | null {
  const trimmed = value.trim();
  if (trimmed === "") return undefined;
  if (!NUMBER_TEXT.test(trimmed)) return null;
  const parsed = Number(trimmed);
  return Number.isFinite(parsed) ? parsed : null;
}

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
export function validateSettings(settings: SimulationCellSettings, symbols: DocumentSymbols): SettingsValidation {
  const errors: Record<string, string> = {};
  const numberField = (key: string, value: string, { required = false, blankAs }: { required?: boolean; blankAs?: number } = {}) => {
    const parsed = parseNumber(value);
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
