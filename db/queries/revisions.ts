import "server-only";
import { and, desc, eq, sql } from "drizzle-orm";
import { contentHash } from "@/lib/history/content-hash";
import { db, type Executor } from "../client";
import { derivations, revisions, users, type Derivation, type Revision, type RevisionKind } from "../schema";
import { recordAuditEvent } from "./audit";
import { writeStoredContentToSharedDoc } from "./collab";
import { returnedRow } from "./returned-row";

/** A revision without its content and results, as the history list shows it. */
export type RevisionSummary = Omit<Revision, "content" | "results"> & { createdByName: string | null };

/**
 * Locks the derivation's row for the rest of the transaction (history, approval and edits serialise on it).
 * A content save takes the weaker `no key update`: it still waits for and excludes every other locker
 * here, but lets shared-document appends (`for key share`) through meanwhile.
 */
export async function lockDerivationRow(executor: Executor, id: string, strength: "update" | "no key update" = "update"): Promise<Derivation | null> {
  const [row] = await executor.select().from(derivations).where(eq(derivations.id, id)).for(strength).limit(1);
  return row ?? null;
}

export async function getLatestRevisionByDerivationId({ derivationId }: { derivationId: string }, executor: Executor = db): Promise<Revision | null> {
  const [row] = await executor.select().from(revisions).where(eq(revisions.derivationId, derivationId)).orderBy(desc(revisions.number)).limit(1);
  return row ?? null;
}

/**
 * Appends a revision of `derivation`'s current content (the caller holds the row
 * lock) and clears the derivation's pending authors, whom it names as authors.
 */
export async function insertRevision(
  executor: Executor,
  {
    derivation,
    kind,
    name = null,
    createdById,
    content = derivation.content,
    title = derivation.title,
    authorIds = derivation.pendingAuthorIds,
  }: {
    derivation: Derivation;
    kind: RevisionKind;
    name?: string | null;
    createdById: string | null;
    content?: Record<string, unknown>;
    title?: string;
    authorIds?: string[];
  },
): Promise<Revision> {
  const [last] = await executor
    .select({ number: sql<number>`coalesce(max(${revisions.number}), 0)` })
    .from(revisions)
    .where(eq(revisions.derivationId, derivation.id));
  const revision = returnedRow(
    await executor
      .insert(revisions)
      .values({
        derivationId: derivation.id,
        number: Number(last?.number ?? 0) + 1,
        kind,
        name,
        title,
        content,
        contentHash: contentHash(content),
        authorIds: [...new Set(authorIds)],
        createdById,
      })
      .returning(),
    "revision",
  );
  await executor.update(derivations).set({ pendingAuthorIds: [] }).where(eq(derivations.id, derivation.id));
  return revision;
}

/**
 * The latest revision when it holds exactly the derivation's current content,
 * otherwise a new revision of `kind` capturing it. The caller holds the row lock.
 */
export async function currentRevision(
  executor: Executor,
  { derivation, kind, createdById }: { derivation: Derivation; kind: RevisionKind; createdById: string | null },
): Promise<Revision> {
  const latest = await getLatestRevisionByDerivationId({ derivationId: derivation.id }, executor);
  if (latest && latest.contentHash === contentHash(derivation.content) && latest.title === derivation.title) return latest;
  return insertRevision(executor, { derivation, kind, createdById });
}

export async function getRevisionsByDerivationId({ derivationId }: { derivationId: string }, executor: Executor = db): Promise<RevisionSummary[]> {
  const rows = await executor
    .select({
      id: revisions.id,
      derivationId: revisions.derivationId,
      number: revisions.number,
      kind: revisions.kind,
      name: revisions.name,
      contentHash: revisions.contentHash,
      title: revisions.title,
      authorIds: revisions.authorIds,
      createdById: revisions.createdById,
      createdAt: revisions.createdAt,
      updatedAt: revisions.updatedAt,
      createdByName: users.name,
    })
    .from(revisions)
    .leftJoin(users, eq(users.id, revisions.createdById))
    .where(eq(revisions.derivationId, derivationId))
    .orderBy(desc(revisions.number));
  return rows;
}

export async function getRevisionByDerivationIdAndId(
  { derivationId, id }: { derivationId: string; id: string },
  executor: Executor = db,
): Promise<Revision | null> {
  const [row] = await executor
    .select()
    .from(revisions)
    .where(and(eq(revisions.derivationId, derivationId), eq(revisions.id, id)))
    .limit(1);
  return row ?? null;
}

/** Stores the derived results of a revision once they are known (they never change for its content). */
export async function setRevisionResultsById({ id, results }: { id: string; results: Record<string, unknown> }, executor: Executor = db): Promise<void> {
  await executor.update(revisions).set({ results, updatedAt: new Date() }).where(eq(revisions.id, id));
}

/**
 * Adds to a revision's stored results without losing what other readers stored:
 * top-level keys are merged, and objects under the same key are merged one level
 * down, so two requests filling in different entries (code in C, code in Python)
 * both keep theirs.
 */
export async function mergeRevisionResultsById({ id, results }: { id: string; results: Record<string, unknown> }, executor: Executor = db): Promise<void> {
  await executor
    .update(revisions)
    .set({
      results: sql`coalesce(${revisions.results}, '{}'::jsonb) || (
        select coalesce(jsonb_object_agg(entry.key, case
          when jsonb_typeof(${revisions.results} -> entry.key) = 'object' and jsonb_typeof(entry.value) = 'object'
          then (${revisions.results} -> entry.key) || entry.value
          else entry.value end), '{}'::jsonb)
        from jsonb_each(${JSON.stringify(results)}::jsonb) as entry)`,
      updatedAt: new Date(),
    })
    .where(eq(revisions.id, id));
}

export type HistoryRefusal = { ok: false; reason: "missing" } | { ok: false; reason: "locked" } | { ok: false; reason: "no_revision" };

/** Names the current content as a checkpoint (a new revision, even when the content matches the latest). */
export async function createCheckpoint({
  derivationId,
  name,
  actorId,
}: {
  derivationId: string;
  name: string;
  actorId: string;
}): Promise<{ ok: true; revision: Revision } | HistoryRefusal> {
  return db.transaction(async (tx) => {
    const derivation = await lockDerivationRow(tx, derivationId);
    if (!derivation) return { ok: false, reason: "missing" } as const;
    if (derivation.lockedAt) return { ok: false, reason: "locked" } as const;
    const revision = await insertRevision(tx, { derivation, kind: "checkpoint", name, createdById: actorId });
    await recordAuditEvent(
      {
        teamId: derivation.teamId,
        actorId,
        action: "derivation.checkpoint",
        targetType: "derivation",
        targetId: derivationId,
        details: { revision: revision.number, name },
      },
      tx,
    );
    return { ok: true, revision } as const;
  });
}

/**
 * Makes an older revision's content current again. Nothing is rewritten: the
 * state before the restore is kept as a revision first, and the restored
 * content becomes a new revision.
 */
export async function restoreRevision({
  derivationId,
  revisionId,
  actorId,
}: {
  derivationId: string;
  revisionId: string;
  actorId: string;
}): Promise<{ ok: true; revision: Revision; derivation: Derivation } | HistoryRefusal> {
  return db.transaction(async (tx) => {
    const derivation = await lockDerivationRow(tx, derivationId);
    if (!derivation) return { ok: false, reason: "missing" } as const;
    if (derivation.lockedAt) return { ok: false, reason: "locked" } as const;
    const source = await getRevisionByDerivationIdAndId({ derivationId, id: revisionId }, tx);
    if (!source) return { ok: false, reason: "no_revision" } as const;
    await currentRevision(tx, { derivation, kind: "auto", createdById: null });
    // Editors connected to the shared document receive the restored content.
    await writeStoredContentToSharedDoc(tx, { derivationId, content: source.content, title: source.title });
    const now = new Date();
    const restored = returnedRow(
      await tx
        .update(derivations)
        .set({ content: source.content, title: source.title, updatedById: actorId, updatedAt: now, pendingAuthorIds: [actorId] })
        .where(eq(derivations.id, derivationId))
        .returning(),
      "derivation",
    );
    const revision = await insertRevision(tx, { derivation: restored, kind: "restore", name: `Restored revision ${source.number}`, createdById: actorId });
    await recordAuditEvent(
      {
        teamId: derivation.teamId,
        actorId,
        action: "derivation.restore",
        targetType: "derivation",
        targetId: derivationId,
        details: { from: source.number, revision: revision.number },
      },
      tx,
    );
    const [current] = await tx.select().from(derivations).where(eq(derivations.id, derivationId)).limit(1);
    return { ok: true, revision, derivation: current ?? restored } as const;
  });
}
