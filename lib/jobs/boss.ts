import "server-only";
import PgBoss from "pg-boss";
import { env } from "@/lib/env";
import { JobQueue } from "./queue";

/**
 * A pg-boss instance on the app's database, in its own `pgboss` schema.
 * `maintenance: false` for the web process: workers run pg-boss's upkeep
 * (expiry, retries, archiving), so it happens wherever work happens.
 */
export function createBoss({ maintenance }: { maintenance: boolean }): PgBoss {
  const boss = new PgBoss({
    connectionString: env.DATABASE_URL,
    schema: "pgboss",
    max: 4,
    application_name: maintenance ? "holonomy-worker" : "holonomy-web",
    supervise: maintenance,
    schedule: false,
  });
  boss.on("error", (error) => console.error("[holonomy] job queue error:", error.message));
  return boss;
}

// One queue per web process, kept on globalThis across development reloads.
const store = globalThis as unknown as { holonomyJobQueue?: JobQueue };

/** The web process's job queue (enqueue, cancel); started on first use. */
export function getJobQueue(): JobQueue {
  store.holonomyJobQueue ??= new JobQueue(createBoss({ maintenance: false }));
  return store.holonomyJobQueue;
}

/** Stops the web process's queue connection (tests and scripts). */
export async function closeJobQueue(): Promise<void> {
  const queue = store.holonomyJobQueue;
  store.holonomyJobQueue = undefined;
  await queue?.stop();
}
