import "server-only";
import { countRateLimitEventsByKey, recordRateLimitEvent } from "@/db/queries/rate-limits";
import { normaliseEmail } from "@/db/queries/users";
import { env } from "@/lib/env";
import { AppError, type ErrorCode } from "@/lib/errors";

// Rate limits other than the per-e-mail sign-in lock (db/queries/sign-in-attempts.ts).
// Each counts events per key (a client address or an e-mail) in a sliding window.
export interface RateLimit {
  action: string;
  max: number;
  windowMinutes: number;
}

export const rateLimits = {
  // Failures only, so a shared address is never blocked by successful sign-ins.
  signInFailuresByAddress: { action: "sign_in_failure:address", max: env.SIGN_IN_MAX_FAILURES_PER_ADDRESS, windowMinutes: env.SIGN_IN_WINDOW_MINUTES },
  passwordResetByAddress: { action: "password_reset:address", max: 20, windowMinutes: 15 },
  passwordResetByEmail: { action: "password_reset:email", max: 5, windowMinutes: 15 },
  signUpByAddress: { action: "sign_up:address", max: 20, windowMinutes: 60 },
  signUpByEmail: { action: "sign_up:email", max: 5, windowMinutes: 60 },
  // The public API: a build may poll, but not hammer; guessing tokens is cut off early.
  apiRequestsByToken: { action: "api:token", max: 600, windowMinutes: 10 },
  apiTokenFailuresByAddress: { action: "api_failure:address", max: 30, windowMinutes: 15 },
} satisfies Record<string, RateLimit>;

const windowStart = (limit: RateLimit) => new Date(Date.now() - limit.windowMinutes * 60_000);

export async function isRateLimited(limit: RateLimit, key: string): Promise<boolean> {
  return (await countRateLimitEventsByKey({ action: limit.action, key, since: windowStart(limit) })) >= limit.max;
}

export async function countAgainst(limit: RateLimit, key: string): Promise<void> {
  await recordRateLimitEvent({ action: limit.action, key, forgetBefore: windowStart(limit) });
}

export const emailKey = normaliseEmail;

/**
 * For request handlers: throws `code` (429) when any limit is reached for its key,
 * otherwise counts this request against all of them. A null key (no client address,
 * e.g. a handler called directly) is not limited.
 */
export async function enforceRateLimits(checks: Array<[RateLimit, string | null]>, code: ErrorCode & `rate_limited:${string}`): Promise<void> {
  const keyed = checks.filter((check): check is [RateLimit, string] => check[1] !== null);
  for (const [limit, key] of keyed) {
    if (await isRateLimited(limit, key)) throw new AppError(code);
  }
  for (const [limit, key] of keyed) await countAgainst(limit, key);
}
