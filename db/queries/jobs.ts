import "server-only";
import { and, desc, eq, inArray, sql } from "drizzle-orm";
import { db, type Executor } from "../client";
import { jobs, type Job, type JobError, type JobKind, type JobState, type NewJob } from "../schema";

export async function createJob({ job }: { job: NewJob & { id: string } }, executor: Executor = db): Promise<Job> {
  const [row] = await executor.insert(jobs).values(job).returning();
  return row!;
}

export async function getJobById({ id }: { id: string }, executor: Executor = db): Promise<Job | null> {
  const [row] = await executor.select().from(jobs).where(eq(jobs.id, id)).limit(1);
  return row ?? null;
}

export async function getJobByIdAndDerivationId({ id, derivationId }: { id: string; derivationId: string }): Promise<Job | null> {
  const [row] = await db
    .select()
    .from(jobs)
    .where(and(eq(jobs.id, id), eq(jobs.derivationId, derivationId)))
    .limit(1);
  return row ?? null;
}

/**
 * Marks a queued job running; null when it is no longer queued (cancelled
 * meanwhile, or taken by another worker after a retry), so it is not run twice.
 * A job left `running` by a worker that died is taken again.
 */
export async function startJobById({ id, worker }: { id: string; worker: string }): Promise<Job | null> {
  const now = new Date();
  const [row] = await db
    .update(jobs)
    .set({ state: "running", startedAt: now, progress: 0, updatedAt: now, worker })
    .where(and(eq(jobs.id, id), inArray(jobs.state, ["queued", "running"])))
    .returning();
  return row ?? null;
}

/** Records progress of a running job (ignored once it has ended). */
export async function updateJobProgressById({ id, progress }: { id: string; progress: number }): Promise<void> {
  await db
    .update(jobs)
    .set({ progress, updatedAt: new Date() })
    .where(and(eq(jobs.id, id), eq(jobs.state, "running")));
}

/**
 * Ends a job. Only a queued or running job ends, so a cancelled job stays
 * cancelled whatever its worker finishes with; false when it had already ended.
 */
export async function finishJobById({
  id,
  state,
  result = null,
  error = null,
}: {
  id: string;
  state: Extract<JobState, "completed" | "failed" | "cancelled">;
  result?: Record<string, unknown> | null;
  error?: JobError | null;
}): Promise<boolean> {
  const now = new Date();
  const rows = await db
    .update(jobs)
    .set({ state, result, error, finishedAt: now, updatedAt: now, ...(state === "completed" ? { progress: 1 } : {}) })
    .where(and(eq(jobs.id, id), inArray(jobs.state, ["queued", "running"])))
    .returning({ id: jobs.id });
  return rows.length > 0;
}

/** Number of jobs of a derivation in each state (tests, the page's queue note). */
export async function countJobsByDerivationId({ derivationId }: { derivationId: string }): Promise<Record<string, number>> {
  const rows = await db
    .select({ state: jobs.state, count: sql<number>`count(*)::int` })
    .from(jobs)
    .where(eq(jobs.derivationId, derivationId))
    .groupBy(jobs.state);
  return Object.fromEntries(rows.map((row) => [row.state, row.count]));
}

/**
 * A queued or running job of this kind on the derivation that this person asked
 * for with the same `input.modelHash`: a repeated request (a reload, a second
 * tab) joins it rather than queueing the same work again.
 */
export async function getActiveJobByModelHash({
  derivationId,
  kind,
  createdById,
  modelHash,
}: {
  derivationId: string;
  kind: JobKind;
  createdById: string;
  modelHash: string;
}): Promise<Job | null> {
  const [row] = await db
    .select()
    .from(jobs)
    .where(
      and(
        eq(jobs.derivationId, derivationId),
        eq(jobs.kind, kind),
        eq(jobs.createdById, createdById),
        inArray(jobs.state, ["queued", "running"]),
        sql`${jobs.input}->>'modelHash' = ${modelHash}`,
      ),
    )
    .orderBy(desc(jobs.createdAt))
    .limit(1);
  return row ?? null;
}

/**
 * Jobs this table still shows queued or running although pg-boss (schema
 * `pgboss`) has failed their queue entry: every delivery went to a worker that
 * died holding it, so each expired, and no handler will ever end the row.
 * Other endings are written by the handler itself before pg-boss hears of them.
 */
export async function getJobsFailedByQueue(): Promise<Pick<Job, "id" | "kind" | "input">[]> {
  const result = await db.execute<{ id: string; kind: JobKind; input: Record<string, unknown> }>(sql`
    select ${jobs.id} as id, ${jobs.kind} as kind, ${jobs.input} as input
    from ${jobs} join pgboss.job as queued on queued.id = ${jobs.id}
    where ${jobs.state} in ('queued', 'running') and queued.state = 'failed'`);
  return result.rows;
}
