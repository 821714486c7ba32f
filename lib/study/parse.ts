/**
 * Reads a study cell's settings (text as typed) against the model into a
 * `StudySpec`: the numbers of every varied parameter, the cases, the time span
 * and the watched names with their kinds. Every problem is collected under the
 * path of its field, so the cell can mark all of them at once.
 */
import { ExpressionError, parseExpression, symbolsOf, TIME, type Model } from "@/lib/mechanics/browser";
import { STUDY_LIMITS, parseParameterValue, type StudySettings } from "@/lib/notebook/document";
import { StudySettingsError } from "./errors";
import type { StudyCaseSpec, StudySpec, VariedParameter, WatchSpec } from "./types";

/** Output points one run of a study may have (time span / output step); peaks are read at this resolution. */
export const MAX_STUDY_RUN_POINTS = 20_000;
/** Values one grid parameter may take. */
export const MAX_GRID_VALUES = 1000;
/** A truncated normal's bounds must span at least this many standard deviations (else it is practically uniform). */
export const MIN_NORMAL_SPAN_SD = 0.1;

const INTEGER_TEXT = /^[+-]?\d+$/;

/** The constraints of a model with the kind of multiplier each has. */
function multiplierNamesOf(model: Pick<Model, "constraints" | "rateConstraints">): string[] {
  return [...(model.constraints ?? []).map((c) => `lambda_${c.name}`), ...(model.rateConstraints ?? []).map((c) => `mu_${c.name}`)];
}

/** What a study may watch in this model, by name (outputs first, then multipliers, then coordinates). */
export function watchableNames(model: Pick<Model, "coordinates" | "outputs" | "constraints" | "rateConstraints">): WatchSpec[] {
  const seen = new Set<string>();
  const list: WatchSpec[] = [];
  const add = (entry: WatchSpec) => {
    if (entry.name === "" || seen.has(entry.name)) return;
    seen.add(entry.name);
    list.push(entry);
  };
  for (const output of model.outputs ?? []) add({ name: output.name, unit: output.unit.trim() || null, kind: "output" });
  for (const name of multiplierNamesOf(model)) add({ name, unit: null, kind: "multiplier" });
  for (const coordinate of model.coordinates) add({ name: coordinate.name, unit: coordinate.unit.trim() || null, kind: "coordinate" });
  return list;
}

/** Values of a grid parameter: a list "0.5, 1, 2" or a range "from:to:count" (count values, ends included). */
export function parseGridValues(text: string): { values: number[] } | { error: string } {
  const trimmed = text.trim();
  if (trimmed === "") return { error: 'Type values ("0.5, 1, 2") or a range ("0.5:2:4").' };
  if (trimmed.includes(":")) {
    const parts = trimmed.split(":").map((part) => part.trim());
    if (parts.length !== 3) return { error: 'A range is "from:to:count", e.g. "0.5:2:4".' };
    const from = parseParameterValue(parts[0]!);
    const to = parseParameterValue(parts[1]!);
    if (typeof from !== "number" || typeof to !== "number") return { error: "The ends of the range must be numbers." };
    if (!INTEGER_TEXT.test(parts[2]!)) return { error: "The count of a range must be a whole number." };
    const count = Number(parts[2]);
    if (count < 1 || count > MAX_GRID_VALUES) return { error: `The count must be between 1 and ${MAX_GRID_VALUES}.` };
    if (count === 1) return from === to ? { values: [from] } : { error: "A range of one value needs equal ends." };
    if (from === to) return { error: "The ends of a range must differ." };
    if (!Number.isFinite(to - from)) return { error: "The ends of the range are too far apart to step between." };
    // Ends exact; inner points by linear interpolation (no accumulated step error).
    return { values: Array.from({ length: count }, (_, i) => (i === count - 1 ? to : from + ((to - from) * i) / (count - 1))) };
  }
  const values: number[] = [];
  for (const part of trimmed.split(",")) {
    const value = parseParameterValue(part);
    if (typeof value !== "number") return { error: part.trim() === "" ? "An empty value between commas." : `"${part.trim()}" is not a number.` };
    if (values.includes(value)) return { error: `${value} is listed twice.` };
    values.push(value);
  }
  if (values.length > MAX_GRID_VALUES) return { error: `At most ${MAX_GRID_VALUES} values.` };
  return { values };
}

/**
 * The study's output times: every `outputStep` from the start, and the end
 * time (always an output point). Runs are integrated with exactly these, so
 * every run's series share one grid.
 */
export function outputTimesOf(spec: Pick<StudySpec, "startTime" | "endTime" | "outputStep">): number[] {
  const steps = (spec.endTime - spec.startTime) / spec.outputStep;
  const whole = Math.floor(steps + 1e-9);
  const times = Array.from({ length: whole + 1 }, (_, k) => spec.startTime + k * spec.outputStep);
  if (steps - whole > 1e-9) times.push(spec.endTime);
  else times[whole] = spec.endTime;
  return times;
}

/**
 * Checks the study cell against the model and returns its numbers, or throws
 * `StudySettingsError` with every problem by field path.
 *
 * @example
 * parseStudy({ ...DEFAULT_STUDY_SETTINGS, watch: ["theta"] }, pendulumModel).runCount // 1
 */
export function parseStudy(settings: StudySettings, model: Model): StudySpec {
  const errors: Record<string, string[]> = {};
  const fail = (key: string, message: string) => void (errors[key] ??= []).push(message);
  const numberField = (key: string, text: string, blankAs?: number): number => {
    const value = parseParameterValue(text);
    if (value === null) fail(key, `"${text.trim()}" is not a number.`);
    else if (value === undefined) {
      if (blankAs === undefined) fail(key, "Required.");
      else return blankAs;
    } else return value;
    return NaN;
  };

  const parameterUnits = new Map(model.parameters.map((p) => [p.name, p.unit.trim() || null]));
  const parameterNames = new Set(model.parameters.map((p) => p.name));
  const coordinateNames = new Set(model.coordinates.map((c) => c.name));
  const inputNames = new Set((model.inputs ?? []).map((i) => i.name));

  // Parameters to vary.
  if (settings.parameters.length > STUDY_LIMITS.parameters) fail("parameters", `At most ${STUDY_LIMITS.parameters} parameters.`);
  const parameters: VariedParameter[] = [];
  const varied = new Set<string>();
  settings.parameters.forEach((entry, i) => {
    const key = `parameters.${i}`;
    const name = entry.name.trim();
    if (name === "") return fail(`${key}.name`, "Choose a parameter.");
    if (!parameterNames.has(name)) return fail(`${key}.name`, `"${name}" is not in the Parameters cell.`);
    if (varied.has(name)) return fail(`${key}.name`, `${name} is varied twice.`);
    varied.add(name);
    const unit = parameterUnits.get(name) ?? null;
    if (settings.mode === "grid") {
      const grid = parseGridValues(entry.values);
      if ("error" in grid) return fail(`${key}.values`, grid.error);
      parameters.push({ name, unit, grid: grid.values });
      return;
    }
    const min = numberField(`${key}.min`, entry.min);
    const max = numberField(`${key}.max`, entry.max);
    if (Number.isFinite(min) && Number.isFinite(max) && !(min < max)) fail(`${key}.max`, "Must be above the minimum.");
    // Samples are drawn as min + (max − min)·u: a span past the largest number would make them infinite.
    else if (Number.isFinite(min) && Number.isFinite(max) && !Number.isFinite(max - min)) fail(`${key}.max`, "The bounds are too far apart to sample between.");
    if (entry.distribution === "uniform") {
      parameters.push({ name, unit, distribution: "uniform", min, max });
      return;
    }
    const mean = numberField(`${key}.mean`, entry.mean);
    const sd = numberField(`${key}.sd`, entry.sd);
    if (Number.isFinite(sd) && !(sd > 0)) fail(`${key}.sd`, "Must be positive.");
    if (Number.isFinite(mean) && Number.isFinite(min) && Number.isFinite(max) && min < max) {
      if (mean < min || mean > max) fail(`${key}.mean`, "Must lie between the minimum and the maximum.");
      else if (Number.isFinite(sd) && sd > 0 && max - min < MIN_NORMAL_SPAN_SD * sd) {
        fail(`${key}.sd`, "The bounds span less than a tenth of the standard deviation: use a uniform distribution.");
      }
    }
    parameters.push({ name, unit, distribution: "normal", mean, sd, min, max });
  });
  if (settings.mode === "tolerance" && settings.parameters.length === 0) fail("parameters", "Add a parameter to sample.");
  const symbolic = model.parameters.filter((p) => p.value === undefined && !varied.has(p.name)).map((p) => p.name);
  if (symbolic.length > 0) fail("parameters", `Give ${symbolic.join(", ")} a value in the Parameters cell, or vary ${symbolic.length === 1 ? "it" : "them"}.`);

  // Samples and seed.
  let samples = 1;
  let seed = 0;
  if (settings.mode === "tolerance") {
    const samplesText = settings.samples.trim();
    if (!INTEGER_TEXT.test(samplesText) || Number(samplesText) < 1 || Number(samplesText) > STUDY_LIMITS.samples) {
      fail("samples", `A whole number from 1 to ${STUDY_LIMITS.samples}.`);
    } else samples = Number(samplesText);
    const seedText = settings.seed.trim();
    if (!INTEGER_TEXT.test(seedText) || Number(seedText) < 0 || Number(seedText) > 0xffff_ffff) fail("seed", "A whole number from 0 to 4294967295.");
    else seed = Number(seedText);
  } else {
    for (const parameter of parameters) if ("grid" in parameter) samples *= parameter.grid.length;
  }

  // Cases.
  if (settings.cases.length === 0) fail("cases", "Add at least one case.");
  if (settings.cases.length > STUDY_LIMITS.cases) fail("cases", `At most ${STUDY_LIMITS.cases} cases.`);
  const caseNames = new Set<string>();
  const cases: StudyCaseSpec[] = settings.cases.map((entry, i) => {
    const key = `cases.${i}`;
    const name = entry.name.trim();
    if (name === "") fail(`${key}.name`, "Name the case.");
    else if (caseNames.has(name)) fail(`${key}.name`, `Another case is called "${name}".`);
    caseNames.add(name);
    const values = (field: "initialCoordinates" | "initialRates") => {
      const out: Record<string, number> = {};
      for (const [coordinate, text] of Object.entries(entry[field])) {
        if (!coordinateNames.has(coordinate)) {
          if (text.trim() !== "") fail(`${key}.${field}.${coordinate}`, `"${coordinate}" is not a coordinate.`);
          continue;
        }
        const value = numberField(`${key}.${field}.${coordinate}`, text, 0);
        if (Number.isFinite(value)) out[coordinate] = value;
      }
      return out;
    };
    const inputs: Record<string, string> = {};
    for (const [input, text] of Object.entries(entry.inputs)) {
      const expr = text.trim();
      if (expr === "") continue;
      const field = `${key}.inputs.${input}`;
      if (!inputNames.has(input)) {
        fail(field, `"${input}" is not an input.`);
        continue;
      }
      try {
        const unknown = [...symbolsOf(parseExpression(expr)).keys()].filter((symbol) => symbol !== TIME && !parameterNames.has(symbol));
        if (unknown.length > 0)
          fail(field, `An input is a function of t and the parameters; ${unknown.join(", ")} ${unknown.length === 1 ? "is" : "are"} neither.`);
        else inputs[input] = expr;
      } catch (error) {
        if (!(error instanceof ExpressionError)) throw error;
        fail(field, error.message);
      }
    }
    return { name, initialCoordinates: values("initialCoordinates"), initialRates: values("initialRates"), inputs };
  });

  // Time span and tolerance.
  const startTime = numberField("startTime", settings.startTime, 0);
  const endTime = numberField("endTime", settings.endTime);
  const outputStep = numberField("outputStep", settings.outputStep);
  const tolerance = numberField("tolerance", settings.tolerance, 1e-8);
  if (Number.isFinite(startTime) && Number.isFinite(endTime) && !(endTime > startTime)) fail("endTime", "Must be after the start time.");
  if (Number.isFinite(outputStep) && !(outputStep > 0)) fail("outputStep", "Must be positive.");
  else if (Number.isFinite(startTime) && endTime > startTime && (endTime - startTime) / outputStep > MAX_STUDY_RUN_POINTS) {
    fail("outputStep", `Too fine: at most ${MAX_STUDY_RUN_POINTS.toLocaleString("en-GB")} output points per run.`);
  }
  if (Number.isFinite(tolerance) && !(tolerance >= 1e-14 && tolerance <= 1e-2)) fail("tolerance", "Between 1e-14 and 1e-2.");

  // Watched names.
  const watchable = new Map(watchableNames(model).map((entry) => [entry.name, entry]));
  const watch: WatchSpec[] = [];
  if (settings.watch.length === 0) fail("watch", "Choose at least one output, multiplier or coordinate to watch.");
  settings.watch.forEach((raw, i) => {
    const name = raw.trim();
    const entry = watchable.get(name);
    if (!entry) fail(`watch.${i}`, name === "" ? "Choose a name." : `"${name}" is not an output, a multiplier or a coordinate.`);
    else if (watch.some((w) => w.name === name)) fail(`watch.${i}`, `${name} is watched twice.`);
    else watch.push({ ...entry });
  });

  const runCount = samples * settings.cases.length;
  if (Object.keys(errors).length === 0 && runCount > STUDY_LIMITS.runs) {
    fail(
      settings.mode === "grid" ? "parameters" : "samples",
      `${runCount.toLocaleString("en-GB")} runs: at most ${STUDY_LIMITS.runs.toLocaleString("en-GB")} per study.`,
    );
  }
  if (Object.keys(errors).length > 0) throw new StudySettingsError(errors);
  return { mode: settings.mode, samples, seed, parameters, cases, startTime, endTime, outputStep, tolerance, watch, runCount };
}
