/**
 * Typed errors of the derivation engine. The engine never throws plain
 * `Error`s for problems in a user's model: callers (the CLI, the API, the
 * notebook) need the field and column to point at the offending text.
 */

export type ExpressionErrorCode = "parse" | "limit" | "unknown_symbol" | "rate_of_parameter" | "circular_definition" | "unsupported";

/** A problem located inside one expression. `position` is 0-based; `column` is 1-based. */
export class ExpressionError extends Error {
  readonly code: ExpressionErrorCode;
  readonly position: number;
  readonly length: number;

  constructor(code: ExpressionErrorCode, message: string, position: number, length = 1) {
    super(message);
    this.name = "ExpressionError";
    this.code = code;
    this.position = position;
    this.length = Math.max(1, length);
  }

  get column(): number {
    return this.position + 1;
  }
}

export type ModelErrorCode =
  ExpressionErrorCode | "syntax" | "schema" | "duplicate_name" | "reserved_name" | "unit" | "unit_mismatch" | "too_large" | "singular";

/**
 * A problem in a model, located by field path (`kinetic`, `definitions[1].expr`,
 * `parameters[0].unit`) and, where it applies, a 1-based column in that field's text.
 */
export class ModelError extends Error {
  readonly code: ModelErrorCode;
  readonly field: string;
  readonly column: number | null;
  readonly length: number;

  constructor(code: ModelErrorCode, field: string, message: string, column: number | null = null, length = 1) {
    super(message);
    this.name = "ModelError";
    this.code = code;
    this.field = field;
    this.column = column;
    this.length = length;
  }

  static fromExpression(field: string, error: ExpressionError): ModelError {
    return new ModelError(error.code, field, error.message, error.column, error.length);
  }

  /**
   * Runs `work` on one field's text; an ExpressionError it throws becomes a
   * ModelError naming the field (same code, column and length).
   *
   * @example const tree = ModelError.inField("kinetic", () => parseExpression(model.kinetic));
   */
  static inField<T>(field: string, work: () => T): T {
    try {
      return work();
    } catch (error) {
      if (error instanceof ExpressionError) throw ModelError.fromExpression(field, error);
      throw error;
    }
  }

  /** One line for a terminal: `kinetic, column 12: unknown symbol "l3"`. */
  toLine(): string {
    return this.column === null ? `${this.field}: ${this.message}` : `${this.field}, column ${this.column}: ${this.message}`;
  }

  toJSON(): { code: ModelErrorCode; field: string; column: number | null; length: number; message: string } {
    return { code: this.code, field: this.field, column: this.column, length: this.length, message: this.message };
  }
}

/** Raised when a computation exceeds a limit (time, size) the caller set. */
export class EngineLimitError extends Error {
  readonly limit: string;
  constructor(limit: string, message: string) {
    super(message);
    this.name = "EngineLimitError";
    this.limit = limit;
  }
}
