import { AppError } from "@/lib/errors";

/** Reads a JSON body that may be empty (then `{}`); malformed JSON is a validation error. */
export async function readOptionalJson(request: Request): Promise<unknown> {
  const text = await request.text();
  if (text.trim() === "") return {};
  try {
    return JSON.parse(text);
  } catch {
    throw new AppError("bad_request:validation", "The request body must be a JSON object.");
  }
}
