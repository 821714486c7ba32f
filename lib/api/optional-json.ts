import { AppError } from "@/lib/errors";
import { JSON_BODY_LIMIT, readBodyText } from "./body-text";
import { assertJsonContentType } from "./request-checks";

/**
 * Reads a JSON body that may be empty (then `{}`); a body not declared as JSON is
 * a 415 and one over `limit` bytes a 413, like readJson; malformed JSON is a
 * validation error.
 */
export async function readOptionalJson(request: Request, { limit = JSON_BODY_LIMIT }: { limit?: number } = {}): Promise<unknown> {
  const text = await readBodyText(request, limit);
  if (text.trim() === "") return {};
  assertJsonContentType(request);
  try {
    return JSON.parse(text);
  } catch {
    throw new AppError("bad_request:validation", "The request body is not valid JSON.");
  }
}
