import { AppError } from "@/lib/errors";
import { assertJsonContentType } from "./request-checks";

/**
 * Reads a JSON body that may be empty (then `{}`); a body not declared as JSON is
 * a 415, like readJson; malformed JSON is a validation error.
 */
export async function readOptionalJson(request: Request): Promise<unknown> {
  const text = await request.text();
  if (text.trim() === "") return {};
  assertJsonContentType(request);
  try {
    return JSON.parse(text);
  } catch {
    throw new AppError("bad_request:validation", "The request body must be a JSON object.");
  }
}
