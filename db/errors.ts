/**
 * Errors that query functions throw about the data itself: a row that is not
 * there, a write that would break a rule of the data (the last lead, a used
 * token), or a row that belongs to someone else. They carry no HTTP status;
 * `toAppError` (lib/errors.ts) maps them to the answer a route gives.
 *
 * Plain classes with no imports, so lib/errors.ts can map them on either side.
 */

/** What a data error is about. */
export type DataEntity = "invite" | "member" | "password_reset";

export type DataErrorKind = "not_found" | "conflict" | "not_permitted";

export abstract class DataError extends Error {
  abstract readonly kind: DataErrorKind;

  constructor(
    readonly entity: DataEntity,
    message: string,
  ) {
    super(message);
  }
}

/** The row does not exist (or is not the caller's to see). */
export class NotFoundError extends DataError {
  readonly kind = "not_found";
  override readonly name = "NotFoundError";
}

/** The write conflicts with the data as it stands (e.g. removing the last lead, reusing a token). */
export class ConflictError extends DataError {
  readonly kind = "conflict";
  override readonly name = "ConflictError";
}

/** The row exists but this caller may not act on it (e.g. an invite sent to another address). */
export class NotPermittedError extends DataError {
  readonly kind = "not_permitted";
  override readonly name = "NotPermittedError";
}
