import "server-only";
import { drizzle, type NodePgDatabase } from "drizzle-orm/node-postgres";
import { Pool } from "pg";
import { env } from "@/lib/env";
import * as schema from "./schema";

export type Database = NodePgDatabase<typeof schema>;
/** A transaction handle or the database itself; query functions accept either. */
export type Executor = Database | Parameters<Parameters<Database["transaction"]>[0]>[0];

interface DatabaseHandle {
  pool: Pool;
  db: Database;
}

// One pool per process; kept on globalThis so dev-server reloads reuse it.
const globalForDb = globalThis as unknown as { holonomyDb?: DatabaseHandle };

function createHandle(): DatabaseHandle {
  if (!env.DATABASE_URL) throw new Error("DATABASE_URL is missing");
  const pool = new Pool({
    connectionString: env.DATABASE_URL,
    max: env.DATABASE_POOL_MAX,
    // Fail fast so an outage becomes a 503 instead of a hanging request.
    connectionTimeoutMillis: 3000,
    idleTimeoutMillis: 30000,
  });
  pool.on("error", (error) => console.error("[holonomy] idle database client error:", error.message));
  return { pool, db: drizzle(pool, { schema }) };
}

// The pool connects lazily, on the first query, so importing this module is cheap.
globalForDb.holonomyDb ??= createHandle();
export const db: Database = globalForDb.holonomyDb.db;
/** The pool itself, for libraries that bring their own SQL (the rate limiter's store, db/queries/rate-limits.ts). */
export const pool: Pool = globalForDb.holonomyDb.pool;

/** Closes the pool (scripts and tests call this so the process can exit). */
export async function closeDatabase(): Promise<void> {
  await globalForDb.holonomyDb?.pool.end();
}
