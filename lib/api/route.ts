import "server-only";
import { clientAddress } from "@/lib/client-address";
import { AppError, toAppError } from "@/lib/errors";
import { withRequestContext } from "@/lib/request-context";
import { JSON_BODY_LIMIT, readBodyText } from "./body-text";
import { assertJsonContentType, assertSameOrigin } from "./request-checks";

type RouteContext<Params> = { params: Promise<Params> };

/**
 * Wraps a route handler so every failure becomes the JSON error shape
 * `{ "error": { "code", "message" } }` with the status of its code. Unexpected
 * errors are logged in full and answered with a generic 500. The handler runs
 * with the client's address in the request context, for the audit log.
 * A state-changing request from another site is refused (403 `forbidden:origin`)
 * before the handler runs (lib/api/request-checks.ts).
 */
export function apiRoute<Params = Record<string, never>>(handler: (request: Request, context: RouteContext<Params>) => Promise<Response>) {
  return async (request: Request, context: RouteContext<Params>): Promise<Response> => {
    try {
      assertSameOrigin(request);
      return await withRequestContext({ clientAddress: clientAddress(request.headers) }, () => handler(request, context));
    } catch (error) {
      return toAppError(error).toResponse();
    }
  };
}

/**
 * Reads a JSON body; a body not declared as JSON is a 415 (a cross-site form can
 * send text/plain, never application/json), one over `limit` bytes a 413,
 * malformed JSON a validation error.
 */
export async function readJson(request: Request, { limit = JSON_BODY_LIMIT }: { limit?: number } = {}): Promise<unknown> {
  assertJsonContentType(request);
  const text = await readBodyText(request, limit);
  if (text.trim() === "") throw new AppError("bad_request:validation", "The request body is empty: send a JSON object.");
  try {
    return JSON.parse(text);
  } catch {
    throw new AppError("bad_request:validation", "The request body is not valid JSON.");
  }
}
