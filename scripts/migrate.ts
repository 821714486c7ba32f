// Applies the SQL migrations in drizzle/ to DATABASE_URL (drizzle-orm's migrator).
// Generate new migrations with `npm run db:generate`; never `push` on a start path.
import path from "node:path";
import { drizzle } from "drizzle-orm/node-postgres";
import { migrate } from "drizzle-orm/node-postgres/migrator";
import { Pool } from "pg";
import { env } from "../lib/env";

async function main(): Promise<void> {
  const pool = new Pool({ connectionString: env.DATABASE_URL, max: 1 });
  try {
    await migrate(drizzle(pool), { migrationsFolder: path.resolve(import.meta.dirname, "../drizzle") });
    const database = new URL(env.DATABASE_URL).pathname.slice(1);
    console.log(`[holonomy] migrations applied to ${database}`);
  } finally {
    await pool.end();
  }
}

main().catch((error: unknown) => {
  console.error("[holonomy] migration failed:", error instanceof Error ? error.message : error);
  process.exit(1);
});
