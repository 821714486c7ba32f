import "server-only";
import { sql } from "drizzle-orm";
import { db } from "../client";

/** Round-trips a trivial query; throws when PostgreSQL is unreachable. */
export async function pingDatabase(): Promise<void> {
  await db.execute(sql`select 1`);
}
