import "server-only";
import { and, count, eq, gt, lt } from "drizzle-orm";
import { db, type Executor } from "../client";
import { rateLimitEvents } from "../schema";

/** Counts one request against the limit `action` for `key`, and forgets this key's events older than `forgetBefore`. */
export async function recordRateLimitEvent(
  { action, key, forgetBefore }: { action: string; key: string; forgetBefore: Date },
  executor: Executor = db,
): Promise<void> {
  await executor.insert(rateLimitEvents).values({ action, key });
  await executor
    .delete(rateLimitEvents)
    .where(and(eq(rateLimitEvents.action, action), eq(rateLimitEvents.key, key), lt(rateLimitEvents.createdAt, forgetBefore)));
}

/** Events counted against the limit `action` for `key` since `since`. */
export async function countRateLimitEventsByKey(
  { action, key, since }: { action: string; key: string; since: Date },
  executor: Executor = db,
): Promise<number> {
  const [row] = await executor
    .select({ events: count() })
    .from(rateLimitEvents)
    .where(and(eq(rateLimitEvents.action, action), eq(rateLimitEvents.key, key), gt(rateLimitEvents.createdAt, since)));
  return row?.events ?? 0;
}
