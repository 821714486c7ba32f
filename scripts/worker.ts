// The queue worker: takes server simulations, parameter fits, evaluations of large
// models and report renderings from the job queue (pg-boss in PostgreSQL) and runs
// them in its worker-thread pools. Start any number,
// on any machine that reaches the database and the object store:
//   npx tsx --conditions=react-server scripts/worker.ts
// Stops on SIGTERM/SIGINT after the job in hand (pg-boss's graceful stop); a job a
// killed worker held is delivered again after the queue's expiry.
import { closeDatabase } from "@/db/client";
import { createBoss } from "@/lib/jobs/boss";
import { JOB_HANDLERS } from "@/lib/jobs/handlers";
import { JobQueue } from "@/lib/jobs/queue";
import { SWEEP_INTERVAL_MS, sweepAbandonedJobs } from "@/lib/jobs/sweep";
import { closeEnginePool } from "@/lib/workers/engine-pool";
import { closeSimulationPool } from "@/lib/workers/simulation-pool";

async function main(): Promise<void> {
  const queue = new JobQueue(createBoss({ maintenance: true }));
  await queue.work(logged(JOB_HANDLERS));
  console.log(`[holonomy] queue worker ${process.pid} ready`);
  // Jobs whose every delivery died with its worker: end them (and their studies) with a reason.
  const sweep = () =>
    sweepAbandonedJobs().then(
      (ended) => ended > 0 && console.log(`[holonomy] queue worker ${process.pid} ended ${ended} abandoned job(s)`),
      (error: unknown) => console.error("[holonomy] sweeping abandoned jobs failed:", error instanceof Error ? error.message : error),
    );
  void sweep();
  const sweeper = setInterval(() => void sweep(), SWEEP_INTERVAL_MS);
  sweeper.unref();
  let stopping = false;
  const stop = async (signal: string) => {
    if (stopping) return;
    stopping = true;
    clearInterval(sweeper);
    console.log(`[holonomy] queue worker stopping (${signal})`);
    await queue.stop().catch((error: unknown) => console.error("[holonomy] queue stop:", error));
    await closeSimulationPool();
    await closeEnginePool();
    await closeDatabase();
    process.exit(0);
  };
  process.on("SIGTERM", () => void stop("SIGTERM"));
  process.on("SIGINT", () => void stop("SIGINT"));
}

/** The handlers, each first logging which worker process took which job (to trace a job to its worker). */
function logged(handlers: typeof JOB_HANDLERS): typeof JOB_HANDLERS {
  const wrapped = { ...handlers };
  for (const kind of Object.keys(handlers) as (keyof typeof handlers)[]) {
    const handler = handlers[kind];
    wrapped[kind] = (job, context) => {
      console.log(`[holonomy] queue worker ${process.pid} took ${job.kind} job ${job.id}`);
      return handler(job, context);
    };
  }
  return wrapped;
}

main().catch((error: unknown) => {
  console.error("[holonomy] queue worker failed to start:", error instanceof Error ? error.message : error);
  process.exit(1);
});
