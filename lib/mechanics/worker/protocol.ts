import { EngineLimitError, ExpressionError, ModelError, type ExpressionErrorCode, type ModelErrorCode } from "../errors";

/** Pool → worker: one task, its payload already serialized as JSON (the pool measured it). */
export interface TaskRequest {
  id: number;
  task: string;
  payload: string;
}

/** Worker → pool: the answer, or (any number of times before it) the task's progress as a fraction in [0, 1]. */
export type TaskResponse = { id: number; ok: true; result: unknown } | { id: number; ok: false; error: SerializedError } | { id: number; progress: number };

export type SerializedError =
  | { type: "ModelError"; code: ModelErrorCode; field: string; column: number | null; length: number; message: string }
  | { type: "ExpressionError"; code: ExpressionErrorCode; position: number; length: number; message: string }
  | { type: "EngineLimitError"; limit: string; message: string }
  | { type: "Error"; message: string };

/** Typed engine errors cross the thread boundary as plain data and come back as the same classes. */
export function serializeError(error: unknown): SerializedError {
  if (error instanceof ModelError) {
    return { type: "ModelError", code: error.code, field: error.field, column: error.column, length: error.length, message: error.message };
  }
  if (error instanceof ExpressionError) {
    return { type: "ExpressionError", code: error.code, position: error.position, length: error.length, message: error.message };
  }
  if (error instanceof EngineLimitError) return { type: "EngineLimitError", limit: error.limit, message: error.message };
  if (error instanceof RangeError && /call stack/i.test(error.message)) {
    return { type: "EngineLimitError", limit: "depth", message: "the expression is nested too deeply to process" };
  }
  return { type: "Error", message: error instanceof Error ? error.message : String(error) };
}

export function deserializeError(error: SerializedError): Error {
  switch (error.type) {
    case "ModelError":
      return new ModelError(error.code, error.field, error.message, error.column, error.length);
    case "ExpressionError":
      return new ExpressionError(error.code, error.message, error.position, error.length);
    case "EngineLimitError":
      return new EngineLimitError(error.limit, error.message);
    default:
      return new Error(error.message);
  }
}
