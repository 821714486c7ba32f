import "server-only";
import { RateLimiterRes, type RateLimiterPostgres } from "rate-limiter-flexible";
import { createPostgresRateLimiter } from "@/db/queries/rate-limits";
import { normaliseEmail } from "@/db/queries/users";
import { env } from "@/lib/env";
import { AppError, type ErrorCode } from "@/lib/errors";

// Every rate limit of the app, counted in PostgreSQL through rate-limiter-flexible
// (fixed windows, one row per limit and key), so that every app instance and the
// collaboration servers share the same counters.
export interface RateLimit {
  /** Names the counter; also the key prefix in the `rate_limits` table. */
  name: string;
  /** Events allowed per window (scaled by RATE_LIMIT_MULTIPLIER). */
  points: number;
  durationSeconds: number;
}

const minutes = (count: number) => count * 60;

export const rateLimits = {
  // Sign-in counts failures only, so a shared address is never blocked by successful sign-ins.
  signInFailuresByEmail: { name: "sign_in_failure:email", points: env.SIGN_IN_MAX_FAILURES, durationSeconds: minutes(env.SIGN_IN_WINDOW_MINUTES) },
  signInFailuresByAddress: {
    name: "sign_in_failure:address",
    points: env.SIGN_IN_MAX_FAILURES_PER_ADDRESS,
    durationSeconds: minutes(env.SIGN_IN_WINDOW_MINUTES),
  },
  passwordResetByAddress: { name: "password_reset:address", points: 20, durationSeconds: minutes(15) },
  passwordResetByEmail: { name: "password_reset:email", points: 5, durationSeconds: minutes(15) },
  signUpByAddress: { name: "sign_up:address", points: 20, durationSeconds: minutes(60) },
  signUpByEmail: { name: "sign_up:email", points: 5, durationSeconds: minutes(60) },
  // Invitations send e-mail to addresses the sender chooses.
  invitesByUser: { name: "invite:user", points: 50, durationSeconds: minutes(60) },
  invitesByTeam: { name: "invite:team", points: 200, durationSeconds: minutes(60) },
  // The engine and the simulator hold worker threads; a person working steadily stays far below these.
  evaluateByUser: { name: "evaluate:user", points: 300, durationSeconds: minutes(1) },
  simulateByUser: { name: "simulate:user", points: 60, durationSeconds: minutes(1) },
  uploadsByUser: { name: "upload:user", points: 60, durationSeconds: minutes(10) },
  // The public API: a build may poll, but not hammer; guessing tokens is cut off early.
  apiRequestsByToken: { name: "api:token", points: 600, durationSeconds: minutes(10) },
  apiTokenFailuresByAddress: { name: "api_failure:address", points: 30, durationSeconds: minutes(15) },
  // Collaboration connections (opened by the collaboration server, see allowCollabConnection).
  collabConnectionsByUser: { name: "collab:user", points: 60, durationSeconds: minutes(1) },
  collabConnectionsByAddress: { name: "collab:address", points: 300, durationSeconds: minutes(1) },
} satisfies Record<string, RateLimit>;

export const emailKey = normaliseEmail;

// One limiter per limit and process; the counters themselves live in PostgreSQL.
const limiters = new Map<string, RateLimiterPostgres>();

function allowedPoints(limit: RateLimit): number {
  return Math.max(1, Math.round(limit.points * env.RATE_LIMIT_MULTIPLIER));
}

function limiterFor(limit: RateLimit): RateLimiterPostgres {
  let limiter = limiters.get(limit.name);
  if (!limiter) {
    limiter = createPostgresRateLimiter({ name: limit.name, points: allowedPoints(limit), durationSeconds: limit.durationSeconds });
    limiters.set(limit.name, limiter);
  }
  return limiter;
}

/** True when `key` has used up `limit` in the current window (counting nothing). */
export async function isRateLimited(limit: RateLimit, key: string): Promise<boolean> {
  const state = await limiterFor(limit).get(key);
  return state !== null && state.consumedPoints >= allowedPoints(limit);
}

/** Counts one event (e.g. a failure) against `limit` for `key`, without refusing anything. */
export async function countAgainst(limit: RateLimit, key: string): Promise<void> {
  await limiterFor(limit).penalty(key, 1);
}

export type RateLimitDecision = { allowed: true } | { allowed: false; retryAfterSeconds: number };

/** Counts one event against `limit` for `key` and says whether it is within the limit. */
export async function consumeRateLimit(limit: RateLimit, key: string): Promise<RateLimitDecision> {
  try {
    await limiterFor(limit).consume(key, 1);
    return { allowed: true };
  } catch (rejection) {
    // The library rejects with its result object when the limit is reached, with an Error when the store fails.
    if (rejection instanceof RateLimiterRes) return { allowed: false, retryAfterSeconds: Math.max(1, Math.ceil(rejection.msBeforeNext / 1000)) };
    throw rejection;
  }
}

/**
 * For request handlers: counts this request against every limit, and throws
 * `code` (429, with Retry-After) when any of them is used up. A null key (no
 * client address, e.g. a handler called directly) is not limited.
 *
 * @example await enforceRateLimits([[rateLimits.evaluateByUser, user.id]], "rate_limited:engine");
 */
export async function enforceRateLimits(
  checks: Array<[RateLimit, string | null]>,
  code: ErrorCode & `rate_limited:${string}`,
  message?: string,
): Promise<void> {
  let retryAfterSeconds = 0;
  for (const [limit, key] of checks) {
    if (key === null) continue;
    const decision = await consumeRateLimit(limit, key);
    if (!decision.allowed) retryAfterSeconds = Math.max(retryAfterSeconds, decision.retryAfterSeconds);
  }
  if (retryAfterSeconds > 0) throw new AppError(code, message, { retryAfterSeconds });
}

/**
 * For the collaboration server, before it accepts a WebSocket: counts the
 * connection against the person's and the address's limits. A refused
 * connection should be closed with 4429 and may retry after `retryAfterSeconds`.
 */
export async function allowCollabConnection({ userId, address }: { userId: string; address: string | null }): Promise<RateLimitDecision> {
  const decisions = [
    await consumeRateLimit(rateLimits.collabConnectionsByUser, userId),
    ...(address === null ? [] : [await consumeRateLimit(rateLimits.collabConnectionsByAddress, address)]),
  ];
  const refused = decisions.filter((decision) => !decision.allowed);
  if (refused.length === 0) return { allowed: true };
  return { allowed: false, retryAfterSeconds: Math.max(...refused.map((decision) => decision.retryAfterSeconds)) };
}
