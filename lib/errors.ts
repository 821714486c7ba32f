import { DataError, type DataErrorKind } from "@/db/errors";

// One error type for the whole app. Codes are "<kind>:<surface>"; the kind picks
// the HTTP status, the surface says what it is about.
export type ErrorKind =
  | "bad_request"
  | "unauthorized"
  | "forbidden"
  | "not_found"
  | "conflict"
  | "locked"
  | "unprocessable"
  | "length_required"
  | "too_large"
  | "unsupported_media_type"
  | "rate_limited"
  | "unavailable"
  | "internal";

export type ErrorSurface =
  | "api"
  | "session"
  | "sign_in"
  | "sign_up"
  | "validation"
  | "team"
  | "member"
  | "invite"
  | "password_reset"
  | "derivation"
  | "database"
  | "mailbox"
  | "mail"
  | "model"
  | "engine"
  | "file"
  | "storage"
  | "simulation"
  | "fit"
  | "token"
  | "revision"
  | "review"
  | "notification"
  | "archive"
  | "origin"
  | "job"
  | "study"
  | "comment";

export type ErrorCode = `${ErrorKind}:${ErrorSurface}`;

export const statusByKind: Record<ErrorKind, number> = {
  bad_request: 400,
  unauthorized: 401,
  forbidden: 403,
  not_found: 404,
  conflict: 409,
  locked: 423,
  unprocessable: 422,
  length_required: 411,
  too_large: 413,
  unsupported_media_type: 415,
  rate_limited: 429,
  unavailable: 503,
  internal: 500,
};

const defaultMessages: Partial<Record<ErrorCode, string>> = {
  "unauthorized:session": "Sign in to continue.",
  "bad_request:validation": "Some fields need attention.",
  "unavailable:database": "The database is not reachable right now. Try again in a moment.",
  "internal:api": "Something went wrong on our side.",
  "rate_limited:sign_in": "Too many failed sign-in attempts. Wait a few minutes and try again.",
  "rate_limited:sign_up": "Too many sign-up attempts. Wait a while and try again.",
  "rate_limited:password_reset": "Too many password-reset requests. Wait a few minutes and try again.",
};

const kindMessages: Record<ErrorKind, string> = {
  bad_request: "The request is not valid.",
  unauthorized: "Sign in to continue.",
  forbidden: "Your role does not allow this.",
  not_found: "Not found.",
  conflict: "That conflicts with existing data.",
  locked: "This is approved and locked; a lead can unlock it with a reason.",
  unprocessable: "The content cannot be processed as it stands.",
  length_required: "Send the upload with a Content-Length header.",
  too_large: "The upload is larger than the limit.",
  unsupported_media_type: "The request body has a content type this route does not read.",
  rate_limited: "Too many requests. Try again later.",
  unavailable: "A service is not reachable right now.",
  internal: "Something went wrong on our side.",
};

export type FieldErrors = Record<string, string[]>;
/** Structured extra information for the client, e.g. where in a model an error sits. */
export type ErrorDetails = Record<string, unknown>;

export interface ErrorBody {
  error: { code: ErrorCode; message: string; fieldErrors?: FieldErrors; details?: ErrorDetails };
}

export class AppError extends Error {
  readonly code: ErrorCode;
  readonly kind: ErrorKind;
  readonly surface: ErrorSurface;
  readonly status: number;
  readonly fieldErrors?: FieldErrors;
  readonly details?: ErrorDetails;
  /** For 429 answers: the Retry-After header (seconds). Not in the body, which stays the same for every caller. */
  readonly retryAfterSeconds?: number;
  // Next.js keeps a custom digest across the server/client boundary, so error
  // boundaries can tell "database down" apart from other failures in production.
  readonly digest: string;

  constructor(code: ErrorCode, message?: string, options?: { fieldErrors?: FieldErrors; details?: ErrorDetails; cause?: unknown; retryAfterSeconds?: number }) {
    const [kind, surface] = code.split(":") as [ErrorKind, ErrorSurface];
    super(message ?? defaultMessages[code] ?? kindMessages[kind], { cause: options?.cause });
    this.name = "AppError";
    this.code = code;
    this.kind = kind;
    this.surface = surface;
    this.status = statusByKind[kind];
    this.fieldErrors = options?.fieldErrors;
    this.details = options?.details;
    this.retryAfterSeconds = options?.retryAfterSeconds;
    this.digest = `holonomy:${code}`;
  }

  toJSON(): ErrorBody {
    return {
      error: {
        code: this.code,
        message: this.message,
        ...(this.fieldErrors ? { fieldErrors: this.fieldErrors } : {}),
        ...(this.details ? { details: this.details } : {}),
      },
    };
  }

  toResponse(): Response {
    const headers = this.retryAfterSeconds === undefined ? undefined : { "retry-after": String(Math.ceil(this.retryAfterSeconds)) };
    return Response.json(this.toJSON(), { status: this.status, headers });
  }

  static isAppError(value: unknown): value is AppError {
    return value instanceof AppError;
  }
}

const errorKinds = new Set(Object.keys(statusByKind));

/** Rebuilds an AppError from a JSON error body (used by the client fetcher). */
export function appErrorFromBody(body: unknown, fallbackStatus: number): AppError {
  const error = (body as Partial<ErrorBody> | null)?.error;
  if (error && typeof error.code === "string" && errorKinds.has(error.code.split(":")[0] ?? "")) {
    return new AppError(error.code, error.message, { fieldErrors: error.fieldErrors, details: error.details });
  }
  const kind = (Object.entries(statusByKind).find(([, status]) => status === fallbackStatus)?.[0] ?? "internal") as ErrorKind;
  return new AppError(`${kind}:api`);
}

const connectionErrorCodes = new Set([
  "ECONNREFUSED",
  "ECONNRESET",
  "ENOTFOUND",
  "ETIMEDOUT",
  "EHOSTUNREACH",
  "57P01", // admin_shutdown
  "57P03", // cannot_connect_now
  "53300", // too_many_connections
  "3D000", // invalid_catalog_name (database missing)
]);

/** True when an error means PostgreSQL is unreachable rather than a bad query. */
export function isDatabaseUnavailable(error: unknown): boolean {
  let current: unknown = error;
  for (let depth = 0; current && depth < 5; depth += 1) {
    const candidate = current as { code?: unknown; message?: unknown; cause?: unknown; errors?: unknown[] };
    if (typeof candidate.code === "string" && connectionErrorCodes.has(candidate.code)) return true;
    if (typeof candidate.message === "string" && /Connection terminated|connect ECONNREFUSED|timeout exceeded when trying to connect/i.test(candidate.message))
      return true;
    if (Array.isArray(candidate.errors) && candidate.errors.some((inner) => isDatabaseUnavailable(inner))) return true;
    current = candidate.cause;
  }
  return false;
}

const kindOfDataError: Record<DataErrorKind, ErrorKind> = { not_found: "not_found", conflict: "conflict", not_permitted: "forbidden" };

/**
 * Maps anything thrown in a request to an AppError. Data errors from db/
 * keep their message and become the status of their kind; unknown errors are
 * logged with their detail and returned as a generic 500; database outages become 503.
 */
export function toAppError(error: unknown): AppError {
  if (error instanceof AppError) return error;
  if (error instanceof DataError) return new AppError(`${kindOfDataError[error.kind]}:${error.entity}`, error.message, { cause: error });
  if (isDatabaseUnavailable(error)) {
    console.error("[holonomy] database unavailable:", (error as Error)?.message ?? error);
    return new AppError("unavailable:database", undefined, { cause: error });
  }
  console.error("[holonomy] unexpected error:", error);
  return new AppError("internal:api", undefined, { cause: error });
}
