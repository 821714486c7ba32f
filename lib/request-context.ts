import "server-only";
import { AsyncLocalStorage } from "node:async_hooks";

/**
 * Facts about the request being served that code deep below the route needs
 * without every signature carrying them: today the client's address, which
 * the audit log records beside each event.
 */
export interface RequestContext {
  clientAddress: string | null;
}

const storage = new AsyncLocalStorage<RequestContext>();

/** Runs `fn` with `context` visible to everything it calls, awaited work included. */
export function withRequestContext<T>(context: RequestContext, fn: () => T): T {
  return storage.run(context, fn);
}

/** The client address of the request being served, or null outside a request (scripts, seed, tests). */
export function currentClientAddress(): string | null {
  return storage.getStore()?.clientAddress ?? null;
}
