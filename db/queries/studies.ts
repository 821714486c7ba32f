import "server-only";
import { and, asc, desc, eq, getTableColumns, gte, inArray, lt, sql } from "drizzle-orm";
import { db, type Executor } from "../client";
import {
  jobs,
  studies,
  studyRuns,
  users,
  type NewStudy,
  type NewStudyRun,
  type Study,
  type StudyAggregate,
  type StudyRun,
  type StudyRunStatus,
} from "../schema";

/** A study as lists show it: without its content and figures. */
export type StudySummary = Omit<Study, "content" | "aggregate"> & { createdByName: string | null };
/** A run without its series (tables, CSV, worst case, sensitivity). */
export type StudyRunSummary = Omit<StudyRun, "series">;

const { content: _content, aggregate: _aggregate, ...summaryColumns } = getTableColumns(studies);
const { series: _series, ...runColumns } = getTableColumns(studyRuns);

/** Rows per INSERT when a study's runs are written (PostgreSQL takes at most 65 535 parameters per statement). */
const RUN_INSERT_CHUNK = 1000;

/** Records a study and every one of its runs as pending, in one transaction. */
export async function createStudyWithRuns({ study, runs }: { study: NewStudy & { id: string }; runs: Omit<NewStudyRun, "studyId">[] }): Promise<Study> {
  return db.transaction(async (tx) => {
    const [row] = await tx.insert(studies).values(study).returning();
    for (let start = 0; start < runs.length; start += RUN_INSERT_CHUNK) {
      await tx.insert(studyRuns).values(runs.slice(start, start + RUN_INSERT_CHUNK).map((run) => ({ ...run, studyId: study.id })));
    }
    return row!;
  });
}

export async function getStudyById({ id }: { id: string }, executor: Executor = db): Promise<Study | null> {
  const [row] = await executor.select().from(studies).where(eq(studies.id, id)).limit(1);
  return row ?? null;
}

export async function getStudyByIdAndDerivationId({
  id,
  derivationId,
}: {
  id: string;
  derivationId: string;
}): Promise<(Study & { createdByName: string | null }) | null> {
  const [row] = await db
    .select({ study: studies, createdByName: users.name })
    .from(studies)
    .leftJoin(users, eq(users.id, studies.createdById))
    .where(and(eq(studies.id, id), eq(studies.derivationId, derivationId)))
    .limit(1);
  return row ? { ...row.study, createdByName: row.createdByName } : null;
}

/** A cell's studies, newest first. */
export async function getStudiesByDerivationIdAndCellId({
  derivationId,
  cellId,
  limit = 50,
}: {
  derivationId: string;
  cellId: string;
  limit?: number;
}): Promise<StudySummary[]> {
  const rows = await db
    .select({ study: summaryColumns, createdByName: users.name })
    .from(studies)
    .leftJoin(users, eq(users.id, studies.createdById))
    .where(and(eq(studies.derivationId, derivationId), eq(studies.cellId, cellId)))
    .orderBy(desc(studies.createdAt))
    .limit(limit);
  return rows.map((row) => ({ ...row.study, createdByName: row.createdByName }));
}

/** The newest completed study of each of the given cells (the report). */
export async function getLatestCompletedStudiesByDerivationId({ derivationId }: { derivationId: string }): Promise<Study[]> {
  const rows = await db
    .selectDistinctOn([studies.cellId])
    .from(studies)
    .where(and(eq(studies.derivationId, derivationId), eq(studies.state, "completed")))
    .orderBy(studies.cellId, desc(studies.createdAt));
  return rows;
}

export async function getStudyRunsByStudyId({ studyId }: { studyId: string }): Promise<StudyRunSummary[]> {
  return db.select(runColumns).from(studyRuns).where(eq(studyRuns.studyId, studyId)).orderBy(asc(studyRuns.runIndex));
}

/** A study's failed runs in run order, the first `limit` (the report's list). */
export async function getFailedStudyRunsByStudyId({ studyId, limit }: { studyId: string; limit: number }): Promise<StudyRunSummary[]> {
  return db
    .select(runColumns)
    .from(studyRuns)
    .where(and(eq(studyRuns.studyId, studyId), eq(studyRuns.status, "failed")))
    .orderBy(asc(studyRuns.runIndex))
    .limit(limit);
}

/** The stored series of a study's completed runs (the envelope). */
export async function getStudyRunSeriesByStudyId({ studyId }: { studyId: string }): Promise<{ runIndex: number; series: Uint8Array | null }[]> {
  return db
    .select({ runIndex: studyRuns.runIndex, series: studyRuns.series })
    .from(studyRuns)
    .where(and(eq(studyRuns.studyId, studyId), eq(studyRuns.status, "done")))
    .orderBy(asc(studyRuns.runIndex));
}

/** Runs of a batch (indices from … to − 1) still pending: a batch delivered again skips what it already stored. */
export async function getPendingStudyRunsByStudyIdAndRange({ studyId, from, to }: { studyId: string; from: number; to: number }): Promise<StudyRunSummary[]> {
  return db
    .select(runColumns)
    .from(studyRuns)
    .where(and(eq(studyRuns.studyId, studyId), gte(studyRuns.runIndex, from), lt(studyRuns.runIndex, to), eq(studyRuns.status, "pending")))
    .orderBy(asc(studyRuns.runIndex));
}

/** Marks a queued study running (its first batch started); the study as it then stands. */
export async function startStudyById({ id }: { id: string }): Promise<Study | null> {
  const now = new Date();
  await db
    .update(studies)
    .set({ state: "running", startedAt: now, updatedAt: now })
    .where(and(eq(studies.id, id), eq(studies.state, "queued")));
  return getStudyById({ id });
}

export interface FinishedStudyRun {
  status: Exclude<StudyRunStatus, "pending">;
  failureReason: string | null;
  failureMessage: string | null;
  peaks: StudyRun["peaks"];
  energyDrift: number | null;
  constraintResidual: number | null;
  series: Uint8Array | null;
  wallTimeMs: number | null;
}

/**
 * Stores a finished run and counts it on its study, in one transaction. Only a
 * pending run is written, so a batch delivered twice never counts a run twice;
 * false when the run had already been stored.
 */
export async function finishStudyRunByKey({ studyId, runIndex, run }: { studyId: string; runIndex: number; run: FinishedStudyRun }): Promise<boolean> {
  return db.transaction(async (tx) => {
    const now = new Date();
    const updated = await tx
      .update(studyRuns)
      .set({ ...run, updatedAt: now })
      .where(and(eq(studyRuns.studyId, studyId), eq(studyRuns.runIndex, runIndex), eq(studyRuns.status, "pending")))
      .returning({ runIndex: studyRuns.runIndex });
    if (updated.length === 0) return false;
    await tx
      .update(studies)
      .set(run.status === "done" ? { done: sql`${studies.done} + 1`, updatedAt: now } : { failed: sql`${studies.failed} + 1`, updatedAt: now })
      .where(eq(studies.id, studyId));
    return true;
  });
}

/** Replaces a study's spec (the watched names' units once a worker has derived them). */
export async function updateStudySpecById({ id, spec }: { id: string; spec: Study["spec"] }): Promise<void> {
  await db.update(studies).set({ spec, updatedAt: new Date() }).where(eq(studies.id, id));
}

/**
 * Ends a study. Only a queued or running study ends, so a cancelled study stays
 * cancelled whatever its workers finish with; false when it had already ended.
 */
export async function finishStudyById({
  id,
  state,
  error = null,
  aggregate = null,
}: {
  id: string;
  state: "completed" | "cancelled" | "failed";
  error?: { code: string; message: string } | null;
  aggregate?: StudyAggregate | null;
}): Promise<boolean> {
  const now = new Date();
  const rows = await db
    .update(studies)
    .set({ state, error, aggregate, finishedAt: now, updatedAt: now })
    .where(and(eq(studies.id, id), inArray(studies.state, ["queued", "running"])))
    .returning({ id: studies.id });
  return rows.length > 0;
}

/** The queue's batch jobs of a study that have not ended (to cancel them). */
export async function getOpenStudyJobsByStudyId({ studyId }: { studyId: string }): Promise<{ id: string; kind: "study" }[]> {
  const rows = await db
    .select({ id: jobs.id })
    .from(jobs)
    .where(and(eq(jobs.kind, "study"), sql`${jobs.input}->>'studyId' = ${studyId}`, inArray(jobs.state, ["queued", "running"])));
  return rows.map((row) => ({ id: row.id, kind: "study" as const }));
}

/** Mean wall time of a study's finished runs' integrations, ms (the benchmark tells compute from queue overhead with it). */
export async function getMeanRunWallTimeByStudyId({ studyId }: { studyId: string }): Promise<number | null> {
  const [row] = await db
    .select({ mean: sql<number | null>`avg(${studyRuns.wallTimeMs})::float8` })
    .from(studyRuns)
    .where(eq(studyRuns.studyId, studyId));
  return row?.mean ?? null;
}
