import "server-only";
import { clientAddress } from "@/lib/client-address";
import { AppError, toAppError } from "@/lib/errors";
import { withRequestContext } from "@/lib/request-context";

type RouteContext<Params> = { params: Promise<Params> };

/**
 * Wraps a route handler so every failure becomes the JSON error shape
 * `{ "error": { "code", "message" } }` with the status of its code. Unexpected
 * errors are logged in full and answered with a generic 500. The handler runs
 * with the client's address in the request context, for the audit log.
 */
export function apiRoute<Params = Record<string, never>>(handler: (request: Request, context: RouteContext<Params>) => Promise<Response>) {
  return async (request: Request, context: RouteContext<Params>): Promise<Response> => {
    try {
      return await withRequestContext({ clientAddress: clientAddress(request.headers) }, () => handler(request, context));
    } catch (error) {
      return toAppError(error).toResponse();
    }
  };
}

/** Reads a JSON body; malformed JSON is a validation error, not a crash. */
export async function readJson(request: Request): Promise<unknown> {
  try {
    return await request.json();
  } catch {
    throw new AppError("bad_request:validation", "The request body must be a JSON object.");
  }
}
