import "server-only";
import { finishJobById, getJobsFailedByQueue } from "@/db/queries/jobs";
import { failStudy } from "@/lib/studies/service";

/** How often a queue worker looks for jobs the queue gave up on. */
export const SWEEP_INTERVAL_MS = 60_000;

const ABANDONED = "The queue workers that took this job stopped before finishing it, and its retries are used up. Start it again.";

/**
 * Ends the jobs pg-boss failed without a handler ending them (their workers
 * died on every delivery): the row says failed with a reason, and a study
 * whose batch it was is stopped with its stored runs kept. Idempotent: a row
 * ends once, and any number of workers may sweep at the same time.
 *
 * @returns how many jobs it ended.
 */
export async function sweepAbandonedJobs(): Promise<number> {
  let ended = 0;
  for (const job of await getJobsFailedByQueue()) {
    if (!(await finishJobById({ id: job.id, state: "failed", error: { code: "internal:job", message: ABANDONED } }))) continue;
    ended += 1;
    const studyId = job.kind === "study" ? job.input.studyId : undefined;
    if (typeof studyId === "string") {
      await failStudy(
        studyId,
        {
          code: "internal:study",
          message: "A batch of this study's runs was lost with the queue workers that ran it. The study was stopped; the runs stored before are kept.",
        },
        { except: job.id },
      );
    }
  }
  return ended;
}
