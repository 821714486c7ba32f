import type { z } from "zod";
import { AppError, type FieldErrors } from "@/lib/errors";

/** Field errors keyed by dotted path; "_" holds errors about the whole object. */
export function fieldErrorsOf(error: z.ZodError): FieldErrors {
  const fieldErrors: FieldErrors = {};
  for (const issue of error.issues) {
    const key = issue.path.length ? issue.path.join(".") : "_";
    (fieldErrors[key] ??= []).push(issue.message);
  }
  return fieldErrors;
}

/** Parses or throws AppError("bad_request:validation") carrying field errors. */
export function parseOrThrow<Schema extends z.ZodType>(schema: Schema, input: unknown): z.infer<Schema> {
  const parsed = schema.safeParse(input);
  if (!parsed.success) {
    throw new AppError("bad_request:validation", undefined, { fieldErrors: fieldErrorsOf(parsed.error) });
  }
  return parsed.data;
}
