/**
 * How many runs a study's settings ask for, read from the text as typed, so
 * the cell can show the count before anything is queued. The server parses the
 * same text again and is the one that refuses (with field errors); this only counts.
 */
import { STUDY_LIMITS } from "@/lib/notebook/document";
import { parseGridValues } from "@/lib/study";
import type { StudySettings } from "./settings-types";

/** Runs a study may hold; the server refuses more with a typed error. */
export const STUDY_RUN_LIMIT = STUDY_LIMITS.runs;
export const STUDY_PARAMETER_LIMIT = STUDY_LIMITS.parameters;
export const STUDY_CASE_LIMIT = STUDY_LIMITS.cases;

/**
 * The number of values a grid entry names: a list "0.5, 1, 2" or a range
 * "from:to:count" ("0.5:2:4" is four values), read by the same parser the
 * server expands the grid with. Null when the text is not one of those.
 */
export function gridValueCount(text: string): number | null {
  const parsed = parseGridValues(text);
  return "values" in parsed ? parsed.values.length : null;
}

export interface RunCount {
  /** Total runs, or null while a count cannot be read yet. */
  total: number | null;
  /** Runs per case: the grid's product, or the samples. */
  perCase: number | null;
  cases: number;
  /** Why the count cannot be read (the first field at fault). */
  unreadable: string | null;
}

export function studyRunCount(settings: Pick<StudySettings, "mode" | "samples" | "parameters" | "cases">): RunCount {
  const cases = settings.cases.length;
  let perCase: number | null = 1;
  let unreadable: string | null = null;
  if (settings.mode === "tolerance") {
    const samples = settings.samples.trim();
    perCase = /^\d+$/.test(samples) && Number(samples) >= 1 ? Number(samples) : null;
    if (perCase === null) unreadable = "the number of samples";
  } else {
    for (const parameter of settings.parameters) {
      const count = gridValueCount(parameter.values);
      if (count === null) {
        perCase = null;
        unreadable = `the values of ${parameter.name || "a parameter"}`;
        break;
      }
      perCase *= count;
    }
  }
  return { total: perCase === null ? null : perCase * cases, perCase, cases, unreadable };
}
