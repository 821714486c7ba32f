import "server-only";
import { RateLimiterPostgres } from "rate-limiter-flexible";
import { pool } from "../client";
import { rateLimits } from "../schema";
import { getTableName } from "drizzle-orm";

/**
 * A fixed-window counter in PostgreSQL: `points` per `durationSeconds` for each
 * key, stored in `rate_limits` (created by our migration, so the library never
 * runs DDL). Instances are cheap and share the table; `name` keeps their keys apart.
 */
export function createPostgresRateLimiter({ name, points, durationSeconds }: { name: string; points: number; durationSeconds: number }): RateLimiterPostgres {
  return new RateLimiterPostgres({
    storeClient: pool,
    storeType: "pool",
    tableName: getTableName(rateLimits),
    tableCreated: true,
    keyPrefix: name,
    points,
    duration: durationSeconds,
  });
}
