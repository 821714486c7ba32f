import "server-only";
/**
 * The shared documents' update log (live co-editing): append, load, compact,
 * and server-side writes that reach connected editors.
 *
 * A derivation's shared state is the Yjs updates of its rows in
 * `derivation_updates`, applied in id order (any order gives the same state;
 * id order just applies fewer pending structs). Every change that involves
 * more than appending one row runs in one transaction under the derivation's
 * advisory lock, `pg_advisory_xact_lock(hashtextextended(id::text, 0))`:
 * seeding the log from the JSON content, compacting, and server-side writes.
 * Appending needs no advisory lock: compaction deletes exactly the ids it read,
 * so a row appended meanwhile survives.
 */
import { and, asc, eq, getTableName, gt, inArray, isNull, sql } from "drizzle-orm";
import * as Y from "yjs";
import { parseStoredDocument, type DerivationDocument, type DocumentIssue } from "@/lib/notebook/document";
import { documentToYDoc, replaceSharedDocument, yDocToDocument } from "@/lib/notebook/document/shared-doc";
import { db, type Executor } from "../client";
import { derivationUpdates, derivations } from "../schema";

/**
 * The PostgreSQL channel on which stored updates are announced: payload
 * `<derivationId>:<updateRowId>` for a server-side write, and
 * `<derivationId>:<updateRowId>:<instanceId>` for an update a collaboration
 * server stored (so that instance skips its own). Only the key travels:
 * NOTIFY payloads must stay under 8000 bytes, an update need not.
 */
export const SHARED_DOC_CHANNEL = "holonomy_doc";

/**
 * The channel on which collaboration servers pass presence (Yjs awareness) to
 * each other: `<derivationId>:<instanceId>:u:<base64 awareness update>`, or
 * `<derivationId>:<instanceId>:q` to ask the others for their clients' presence.
 * Presence is not stored; what does not fit in a payload is dropped.
 */
export const SHARED_PRESENCE_CHANNEL = "holonomy_presence";

/**
 * The channel on which a change of someone's team membership (a new role, a
 * removal) is announced to the collaboration servers: payload `<userId>`, sent
 * in the changing transaction so it arrives at commit. Each server then judges
 * that person's open connections again (server/collab/server.ts).
 */
export const SHARED_ACCESS_CHANNEL = "holonomy_access";

/** Announces, at commit of the executor's transaction, that `userId`'s access may have changed. */
export async function notifyAccessChanged(executor: Executor, userId: string): Promise<void> {
  await executor.execute(sql`select pg_notify(${SHARED_ACCESS_CHANNEL}, ${userId})`);
}

/** NOTIFY refuses a payload of 8000 bytes or more. */
export const NOTIFY_PAYLOAD_LIMIT = 7999;

export interface StoredUpdate {
  id: number;
  update: Uint8Array;
}

export type LoadSharedDocResult =
  | { status: "loaded"; updates: StoredUpdate[] }
  | { status: "missing" }
  /** The JSON content does not read as a document, so there is nothing to seed the shared state from. */
  | { status: "unreadable"; issues: DocumentIssue[] };

async function lockSharedDoc(executor: Executor, derivationId: string): Promise<void> {
  await executor.execute(sql`select pg_advisory_xact_lock(hashtextextended(${derivationId}::text, 0))`);
}

async function selectUpdates(executor: Executor, derivationId: string, afterId?: number): Promise<StoredUpdate[]> {
  const conditions = [eq(derivationUpdates.derivationId, derivationId)];
  if (afterId !== undefined) conditions.push(gt(derivationUpdates.id, afterId));
  return executor
    .select({ id: derivationUpdates.id, update: derivationUpdates.update })
    .from(derivationUpdates)
    .where(and(...conditions))
    .orderBy(asc(derivationUpdates.id));
}

/** One Y.Doc holding every update (gc on, so deleted content is dropped when encoded). */
function foldUpdates(updates: readonly StoredUpdate[]): Y.Doc {
  const ydoc = new Y.Doc();
  for (const { update } of updates) Y.applyUpdate(ydoc, update);
  return ydoc;
}

/** Whether the Y.Doc holds updates it could not integrate yet (their dependencies are missing). */
function hasPending(ydoc: Y.Doc): boolean {
  return ydoc.store.pendingStructs !== null || ydoc.store.pendingDs !== null;
}

/**
 * A derivation's stored updates. The first load of a derivation with none
 * builds the shared state from its JSON content (migrated and validated) and
 * stores it as the first row, under the advisory lock, so two loaders cannot
 * both seed it. A trashed derivation is missing.
 */
export async function loadSharedDocById({ derivationId }: { derivationId: string }): Promise<LoadSharedDocResult> {
  const existing = await selectUpdates(db, derivationId);
  if (existing.length > 0) return { status: "loaded", updates: existing };
  return db.transaction(async (tx) => {
    await lockSharedDoc(tx, derivationId);
    const seeded = await selectUpdates(tx, derivationId);
    if (seeded.length > 0) return { status: "loaded", updates: seeded } as const;
    const [row] = await tx
      .select({ content: derivations.content, title: derivations.title })
      .from(derivations)
      .where(and(eq(derivations.id, derivationId), isNull(derivations.deletedAt)))
      .limit(1);
    if (!row) return { status: "missing" } as const;
    const parsed = parseStoredDocument(row.content, { title: row.title });
    if (!parsed.ok) return { status: "unreadable", issues: parsed.issues } as const;
    const update = Y.encodeStateAsUpdate(documentToYDoc(parsed.document));
    const [inserted] = await tx.insert(derivationUpdates).values({ derivationId, update }).returning({ id: derivationUpdates.id });
    return { status: "loaded", updates: [{ id: inserted!.id, update }] } as const;
  });
}

/** Stored updates with an id above `afterId` (all of them without), in id order. */
export async function getSharedDocUpdatesById({ derivationId, afterId }: { derivationId: string; afterId?: number }): Promise<StoredUpdate[]> {
  return selectUpdates(db, derivationId, afterId);
}

/** What `readSharedDocUpdatesOn` needs of a connection (a pg Client). */
export interface QueryableConnection {
  query<R extends Record<string, unknown>>(text: string, values: unknown[]): Promise<{ rows: R[] }>;
}

/**
 * Stored updates by row id, of any derivations, read on the given connection:
 * a collaboration server reads what other instances announced on its own
 * listening connection, in one statement for every document it holds, rather
 * than queueing behind its pool's appends. Ids folded by a compaction are missing.
 */
export async function readSharedDocUpdatesOn(connection: QueryableConnection, ids: readonly number[]): Promise<(StoredUpdate & { derivationId: string })[]> {
  if (ids.length === 0) return [];
  const result = await connection.query<{ id: string; derivation_id: string; update: Buffer }>(
    `select id, derivation_id, update from ${getTableName(derivationUpdates)} where id = any($1::bigint[]) order by id`,
    [ids.map(String)],
  );
  return result.rows.map((row) => ({
    id: Number(row.id),
    derivationId: row.derivation_id,
    update: new Uint8Array(row.update.buffer, row.update.byteOffset, row.update.byteLength),
  }));
}

export type AppendUpdateResult = { status: "stored"; id: number } | { status: "refused" };

/**
 * Appends one update. Refused (nothing stored) when the derivation is locked
 * or in the trash, unless `evenIfLocked`: the key-share lock on the derivation's
 * row orders the append against an approval (which locks the row `for update`),
 * so no update is stored after the lock that locked it. It does not wait for a
 * content save (`for no key update`, such as the JSON copy), which would hold
 * every append of the document, on every collaboration server, for its length. With `announceAs` (a collaboration server's instance id)
 * the same statement announces the new row on `holonomy_doc`: PostgreSQL
 * delivers it at commit, so no other instance hears of a row it cannot read yet.
 */
export async function appendSharedDocUpdate({
  derivationId,
  update,
  evenIfLocked = false,
  announceAs,
}: {
  derivationId: string;
  update: Uint8Array;
  evenIfLocked?: boolean;
  announceAs?: string;
}): Promise<AppendUpdateResult> {
  const bytes = Buffer.from(update.buffer, update.byteOffset, update.byteLength);
  const insert = sql`
    insert into ${derivationUpdates} (derivation_id, update)
    select ${derivations.id}, ${bytes} from ${derivations}
    where ${derivations.id} = ${derivationId} and ${derivations.deletedAt} is null
      ${evenIfLocked ? sql`` : sql`and ${derivations.lockedAt} is null`}
    for key share
    returning id`;
  const result = await db.execute<{ id: string }>(
    announceAs === undefined
      ? insert
      : sql`with inserted as (${insert})
          select id, pg_notify(${SHARED_DOC_CHANNEL}, ${`${derivationId}:`} || id::text || ${`:${announceAs}`}) from inserted`,
  );
  const row = result.rows[0];
  return row ? { status: "stored", id: Number(row.id) } : { status: "refused" };
}

export interface CompactionResult {
  /** How many rows were folded (0 or 1: nothing to do). */
  folded: number;
  /** The new row holding them, when there was something to fold. */
  id: number | null;
}

/**
 * Folds a derivation's stored updates into one row, in one transaction under
 * the advisory lock: read the rows, insert their folded state, delete exactly
 * the ids read. An update appended meanwhile is not among them and stays.
 * When some update waits for one that was never stored, the rows are merged
 * without integration (`Y.mergeUpdates`) so nothing pending is dropped.
 */
export async function compactSharedDocById({ derivationId }: { derivationId: string }): Promise<CompactionResult> {
  return db.transaction(async (tx) => {
    await lockSharedDoc(tx, derivationId);
    const rows = await selectUpdates(tx, derivationId);
    if (rows.length <= 1) return { folded: 0, id: null };
    const ydoc = foldUpdates(rows);
    const update = hasPending(ydoc) ? Y.mergeUpdates(rows.map((row) => row.update)) : Y.encodeStateAsUpdate(ydoc);
    ydoc.destroy();
    const [inserted] = await tx.insert(derivationUpdates).values({ derivationId, update }).returning({ id: derivationUpdates.id });
    await tx.delete(derivationUpdates).where(
      inArray(
        derivationUpdates.id,
        rows.map((row) => row.id),
      ),
    );
    return { folded: rows.length, id: inserted!.id };
  });
}

/**
 * A server-side write of a whole document (a restored revision, an applied fit,
 * a rename, a content replaced through the API), inside the caller's
 * transaction: appends the Yjs update that turns the current shared state into
 * `document` and announces it on `holonomy_doc` (delivered at commit), so
 * connected editors receive it. Returns the new row's id; null when the
 * derivation has no shared state yet (its JSON content, which the caller
 * writes, is what the first load seeds from) or when nothing changes.
 */
export async function writeSharedDocInTransaction(
  executor: Executor,
  { derivationId, document }: { derivationId: string; document: DerivationDocument },
): Promise<number | null> {
  await lockSharedDoc(executor, derivationId);
  const rows = await selectUpdates(executor, derivationId);
  if (rows.length === 0) return null;
  const ydoc = foldUpdates(rows);
  const before = Y.encodeStateVector(ydoc);
  replaceSharedDocument(ydoc, document, "server");
  const update = Y.encodeStateAsUpdate(ydoc, before);
  ydoc.destroy();
  // An empty update is two zero bytes (no structs, no deletions).
  if (update.length <= 2) return null;
  const [inserted] = await executor.insert(derivationUpdates).values({ derivationId, update }).returning({ id: derivationUpdates.id });
  await notifySharedDoc(executor, derivationId, inserted!.id);
  return inserted!.id;
}

/** Announces a stored update on the channel (PostgreSQL delivers it when the transaction commits). */
export async function notifySharedDoc(executor: Executor, derivationId: string, id: number): Promise<void> {
  await executor.execute(sql`select pg_notify(${SHARED_DOC_CHANNEL}, ${`${derivationId}:${id}`})`);
}

/** What the collaboration server re-reads of a derivation: lock, approved content, last editor; null when gone or trashed. */
export async function getSharedDocStateById({
  derivationId,
}: {
  derivationId: string;
}): Promise<{ locked: boolean; content: unknown; title: string; updatedById: string | null } | null> {
  const [row] = await db
    .select({ lockedAt: derivations.lockedAt, content: derivations.content, title: derivations.title, updatedById: derivations.updatedById })
    .from(derivations)
    .where(and(eq(derivations.id, derivationId), isNull(derivations.deletedAt)))
    .limit(1);
  return row ? { locked: row.lockedAt !== null, content: row.content, title: row.title, updatedById: row.updatedById } : null;
}

/**
 * `writeSharedDocInTransaction` for content as stored (a revision of any schema
 * version): migrated and validated first; content that does not read leaves
 * the shared state alone (null), as it cannot be expressed in it.
 */
export async function writeStoredContentToSharedDoc(
  executor: Executor,
  { derivationId, content, title }: { derivationId: string; content: unknown; title?: string },
): Promise<number | null> {
  const parsed = parseStoredDocument(content, { title });
  if (!parsed.ok) return null;
  return writeSharedDocInTransaction(executor, { derivationId, document: parsed.document });
}

/**
 * The document as stored in the shared state right now (every acknowledged
 * update, not waiting for the JSON copy), or null when the derivation has no
 * shared state yet (then its JSON content is current). Throws a
 * `SharedDocumentError` when the shared state does not read.
 */
export async function getSharedDocumentById({ derivationId }: { derivationId: string }): Promise<DerivationDocument | null> {
  const rows = await selectUpdates(db, derivationId);
  if (rows.length === 0) return null;
  const ydoc = foldUpdates(rows);
  try {
    return yDocToDocument(ydoc);
  } finally {
    ydoc.destroy();
  }
}
