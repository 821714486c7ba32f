import "server-only";
import { randomUUID } from "node:crypto";
import { hostname } from "node:os";
import type PgBoss from "pg-boss";
import { createJob, finishJobById, getJobById, startJobById, updateJobProgressById } from "@/db/queries/jobs";
import { jobKinds, type Job, type JobError, type JobKind } from "@/db/schema";
import { AppError, type ErrorCode } from "@/lib/errors";

/**
 * The job queue: heavy work (server simulations, parameter fits, evaluations of
 * large models, rendered reports) is queued in
 * PostgreSQL through pg-boss and run by worker processes (scripts/worker.ts),
 * any number of them on any number of machines. The web process only enqueues,
 * reads and cancels. The `jobs` table (db/queries/jobs.ts) is the job as people
 * see it (state, progress, answer); pg-boss carries just its id, delivers it to
 * one worker, and delivers it again when that worker dies (after the queue's
 * expiry), so a job outlives a restart of either side.
 *
 * The pg-boss instance is injected: the web process and the worker each make
 * one (lib/jobs/boss.ts), tests make their own.
 */

/** pg-boss queue of each kind of job: one per kind, named after it, so a new kind needs no entry here. */
export const QUEUE_NAMES = Object.fromEntries(jobKinds.map((kind) => [kind, `holonomy-${kind}`])) as Record<JobKind, string>;

/** What a handler gets besides the job row. */
export interface JobContext {
  /** Aborted when someone cancels the job; pass it on to the worker pool. */
  signal: AbortSignal;
  /** Fraction done, 0 … 1 (written to the row at most every PROGRESS_INTERVAL_MS). */
  progress(fraction: number): void;
  /**
   * Whether the queue delivers this job again should this attempt end in an
   * unexpected error (anything but an AppError): only for a kind in
   * RETRIED_KINDS with deliveries left. False on the last attempt, when the
   * handler must leave what the job is about in a final state.
   */
  willRetry: boolean;
}

/** Where a delivery stands in the queue's retry policy (pg-boss's `retryCount` and `retryLimit`). */
export interface JobAttempt {
  retryCount: number;
  retryLimit: number;
}

/**
 * Kinds whose handler resumes where an earlier attempt stopped, so an
 * unexpected error (a lost database connection, say) is worth another
 * delivery: a study batch skips the runs it already stored. Other kinds fail at
 * the first unexpected error, as a retry could repeat their side effects.
 */
export const RETRIED_KINDS: ReadonlySet<JobKind> = new Set<JobKind>(["study"]);

/** Runs one job; returns its answer (stored in `jobs.result`), or throws an AppError (stored in `jobs.error`). */
export type JobHandler = (job: Job, context: JobContext) => Promise<Record<string, unknown>>;

export interface JobQueueOptions {
  /** Seconds a worker may hold a job before pg-boss gives it to another (the worker is presumed dead). */
  expireInSeconds?: number;
  /** Deliveries after the first, for a worker that died mid-job. */
  retryLimit?: number;
  /** How often a waiting worker asks for work, and a running job checks for cancellation. */
  pollingIntervalSeconds?: number;
}

const PROGRESS_INTERVAL_MS = 500;
const CANCEL_CHECK_MS = 500;
const TERMINAL = new Set(["completed", "failed", "cancelled"]);

export class JobQueue {
  private readonly boss: PgBoss;
  private readonly options: Required<JobQueueOptions>;
  private started: Promise<void> | null = null;

  constructor(boss: PgBoss, options: JobQueueOptions = {}) {
    this.boss = boss;
    this.options = { expireInSeconds: 15 * 60, retryLimit: 2, pollingIntervalSeconds: 1, ...options };
  }

  /** Starts pg-boss (creating or migrating its schema) and the queues; idempotent. */
  start(): Promise<void> {
    this.started ??= (async () => {
      await this.boss.start();
      for (const name of Object.values(QUEUE_NAMES)) {
        if (await this.boss.getQueue(name)) continue;
        try {
          await this.boss.createQueue(name, { name, expireInSeconds: this.options.expireInSeconds, retryLimit: this.options.retryLimit, retryDelay: 1 });
        } catch (error) {
          // Another process created it at the same moment.
          if (!(await this.boss.getQueue(name))) throw error;
        }
      }
    })();
    return this.started;
  }

  async stop(): Promise<void> {
    if (!this.started) return;
    await this.started.catch(() => undefined);
    this.started = null;
    await this.boss.stop({ graceful: true, wait: true, timeout: 10_000 });
  }

  /** Records the job and queues it; the row is `queued` until a worker takes it. */
  async enqueue({ kind, derivationId, userId, input }: { kind: JobKind; derivationId: string; userId: string; input: Record<string, unknown> }): Promise<Job> {
    await this.start();
    const id = randomUUID();
    const job = await createJob({ job: { id, derivationId, kind, input, createdById: userId } });
    try {
      await this.boss.send(QUEUE_NAMES[kind], { jobId: id }, { id });
    } catch (error) {
      await finishJobById({ id, state: "failed", error: { code: "unavailable:job", message: "The job could not be queued." } });
      throw new AppError("unavailable:job", "The job queue is not reachable right now. Try again in a moment.", { cause: error });
    }
    return job;
  }

  /**
   * Cancels a queued or running job: the row says so at once (a worker never
   * starts it, or aborts it at its next check) and pg-boss drops it.
   * False when the job had already ended.
   */
  async cancel(job: Pick<Job, "id" | "kind">): Promise<boolean> {
    const cancelled = await finishJobById({ id: job.id, state: "cancelled", error: { code: "conflict:job", message: "The job was cancelled." } });
    if (cancelled) {
      await this.start();
      await this.boss.cancel(QUEUE_NAMES[job.kind], job.id).catch((error: unknown) => {
        // The row decides; a worker that still gets the job skips it.
        console.error("[holonomy] pg-boss could not cancel a job:", error instanceof Error ? error.message : error);
      });
    }
    return cancelled;
  }

  /** Starts taking jobs of each kind given and running them with its handler (worker processes). */
  async work(handlers: Partial<Record<JobKind, JobHandler>>): Promise<void> {
    await this.start();
    for (const [kind, handler] of Object.entries(handlers) as [JobKind, JobHandler][]) {
      await this.boss.work<{ jobId: string }>(
        QUEUE_NAMES[kind],
        // pg-boss waits out the interval after a job shorter than it: a study's batches poll at its floor, 0.5 s.
        {
          batchSize: 1,
          includeMetadata: true,
          pollingIntervalSeconds: kind === "study" ? Math.min(0.5, this.options.pollingIntervalSeconds) : this.options.pollingIntervalSeconds,
        },
        async ([delivery]) => {
          // A rejection hands the job back to pg-boss, which delivers it again after the queue's retry delay.
          if (delivery) await runJob(delivery.data.jobId, handler, { retryCount: delivery.retryCount, retryLimit: delivery.retryLimit });
        },
      );
    }
  }
}

/** This process as a job's `worker`: host name and process id. */
export const WORKER_NAME = `${hostname()}:${process.pid}`;

/**
 * Runs one delivered job with its handler, keeping the row up to date. Never
 * throws for the job's own failure, except an unexpected error of a kind in
 * RETRIED_KINDS with deliveries left (`attempt`): then the row stays running and
 * the error goes back to pg-boss, which delivers the job again. Without
 * `attempt` the delivery is the last one.
 */
export async function runJob(id: string, handler: JobHandler, attempt: JobAttempt = { retryCount: 0, retryLimit: 0 }): Promise<void> {
  const job = await startJobById({ id, worker: WORKER_NAME });
  // Cancelled before it started, or already finished by an earlier delivery.
  if (!job) return;
  const willRetry = RETRIED_KINDS.has(job.kind) && attempt.retryCount < attempt.retryLimit;
  const controller = new AbortController();
  const watcher = setInterval(() => {
    void getJobById({ id })
      .then((row) => {
        if (row?.state === "cancelled") controller.abort();
      })
      .catch(() => undefined);
  }, CANCEL_CHECK_MS);
  let lastWrite = 0;
  const progress = (fraction: number) => {
    const now = Date.now();
    if (now - lastWrite < PROGRESS_INTERVAL_MS) return;
    lastWrite = now;
    void updateJobProgressById({ id, progress: Math.min(1, Math.max(0, fraction)) }).catch(() => undefined);
  };
  try {
    const result = await handler(job, { signal: controller.signal, progress, willRetry });
    await finishJobById({ id, state: "completed", result });
  } catch (error) {
    if (willRetry && !(error instanceof AppError) && !controller.signal.aborted) {
      console.error(
        `[holonomy] ${job.kind} job ${id} failed on attempt ${attempt.retryCount + 1} of ${attempt.retryLimit + 1}; it will be delivered again:`,
        error,
      );
      throw error;
    }
    // A cancelled job's row already says so; finishJobById leaves it as it is.
    await finishJobById({ id, state: "failed", error: jobErrorOf(error) });
  } finally {
    clearInterval(watcher);
  }
}

function jobErrorOf(error: unknown): JobError {
  if (error instanceof AppError) {
    return {
      code: error.code,
      message: error.message,
      ...(error.fieldErrors ? { fieldErrors: error.fieldErrors as Record<string, string[]> } : {}),
      ...(error.details ? { details: error.details as Record<string, unknown> } : {}),
    };
  }
  console.error("[holonomy] a job failed:", error);
  return { code: "internal:job", message: "The job failed on the server." };
}

/** The stored error of a failed or cancelled job as the AppError the API answers. */
export function appErrorOfJob(job: Pick<Job, "state" | "error">): AppError {
  if (job.state === "cancelled") return new AppError("conflict:job", "The job was cancelled.");
  const error = job.error ?? { code: "internal:job", message: "The job failed on the server." };
  return new AppError(error.code as ErrorCode, error.message, { fieldErrors: error.fieldErrors, details: error.details });
}

/**
 * Waits for a job to end by reading its row (the web process does no work of
 * its own meanwhile); the job as it stands when the time is up.
 */
export async function waitForJob(id: string, { timeoutMs, intervalMs = 200 }: { timeoutMs: number; intervalMs?: number }): Promise<Job> {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const job = await getJobById({ id });
    if (!job) throw new AppError("not_found:job", "The job is gone.");
    if (TERMINAL.has(job.state) || Date.now() >= deadline) return job;
    await new Promise((resolve) => setTimeout(resolve, intervalMs));
  }
}
