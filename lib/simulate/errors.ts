/**
 * Typed errors of the simulation library. Callers (the notebook, the API, the
 * worker pool) switch on `code` to show a precise message; none of these is a
 * plain `Error`.
 */

export { SingularMatrixError } from "../numeric/errors";

export type SimulationSetupErrorCode = "settings" | "unknown_name" | "missing_parameter" | "expression" | "too_large" | "dimension" | "constraint";

/** A problem with the system or the settings, found before integration starts. */
export class SimulationSetupError extends Error {
  readonly code: SimulationSetupErrorCode;
  /** The setting the problem is about (`outputStep`, `inputs.u`, `parameters.c`). */
  readonly field: string;

  constructor(code: SimulationSetupErrorCode, field: string, message: string) {
    super(message);
    this.name = "SimulationSetupError";
    this.code = code;
    this.field = field;
  }

  toJSON(): { code: SimulationSetupErrorCode; field: string; message: string } {
    return { code: this.code, field: this.field, message: this.message };
  }
}

export type MeasuredDataErrorCode =
  | "too_large"
  | "too_many_rows"
  | "too_few_rows"
  | "empty"
  | "syntax"
  | "header"
  | "missing_column"
  | "duplicate_column"
  | "unknown_column"
  | "missing_unit"
  | "unknown_unit"
  | "unit_mismatch"
  | "column_count"
  | "bad_cell"
  | "non_monotone_time";

/**
 * A problem in an uploaded CSV of measured data. `line` is 1-based and counts
 * every physical line of the file (comments and blank lines included), so it
 * matches what a text editor shows; it is null for problems of the file as a whole.
 */
export class MeasuredDataError extends Error {
  readonly code: MeasuredDataErrorCode;
  readonly line: number | null;
  /** Header name of the column concerned, when there is one. */
  readonly column: string | null;

  constructor(code: MeasuredDataErrorCode, message: string, line: number | null = null, column: string | null = null) {
    super(message);
    this.name = "MeasuredDataError";
    this.code = code;
    this.line = line;
    this.column = column;
  }

  /** One line for a message box: `line 14: time 0.30 s is not after the previous row (0.30 s)`. */
  toLine(): string {
    return this.line === null ? this.message : `line ${this.line}: ${this.message}`;
  }

  toJSON(): { code: MeasuredDataErrorCode; line: number | null; column: string | null; message: string } {
    return { code: this.code, line: this.line, column: this.column, message: this.message };
  }
}

export type FitErrorCode = "settings" | "no_data" | "simulation_failed" | "too_few_points";

/** A parameter fit that could not start or could not produce a result. */
export class FitError extends Error {
  readonly code: FitErrorCode;
  constructor(code: FitErrorCode, message: string) {
    super(message);
    this.name = "FitError";
    this.code = code;
  }
}
