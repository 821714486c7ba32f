import "server-only";
import { returnedRow } from "./returned-row";
import { and, asc, count, desc, eq, gt, ilike, inArray, isNotNull, isNull, lte, sql, type SQL } from "drizzle-orm";
import { alias } from "drizzle-orm/pg-core";
import { parseStoredDocument, type DerivationDocument } from "@/lib/notebook/document";
import { db, type Executor } from "../client";
import { derivations, files, jobs, simulationRuns, users, type Derivation, type DerivationStatus, type NewSimulationRun, type NewStoredFile } from "../schema";
import { writeSharedDocInTransaction } from "./collab";
import { currentRevision, getLatestRevisionByDerivationId, lockDerivationRow } from "./revisions";

/** A pause in editing this long ends a stretch of work: the state it left becomes an automatic revision. */
export const AUTO_REVISION_PAUSE_MS = 2 * 60_000;
/** During continuous editing, an automatic revision at most this often. */
export const AUTO_REVISION_INTERVAL_MS = 10 * 60_000;

export type SaveContentResult =
  | { status: "saved"; derivation: Derivation }
  | { status: "missing" }
  | { status: "locked"; derivation: Derivation }
  | { status: "conflict"; derivation: Derivation };
import { recordAuditEvent } from "./audit";
import { claimIdempotencyKey, type IdempotencyClaim } from "./idempotency";

export interface DerivationSummary {
  id: string;
  teamId: string;
  title: string;
  status: DerivationStatus;
  ownerId: string | null;
  ownerName: string | null;
  updatedByName: string | null;
  /** Named coordinates in the content (notebook document or model file). */
  coordinatesCount: number;
  createdAt: Date;
  updatedAt: Date;
}

const updater = alias(users, "updater");
const deleter = alias(users, "deleter");

// A derivation in the trash is gone for every reader but the trash list.
const notTrashed = isNull(derivations.deletedAt);

// Content is a notebook document (cells) or, for older rows, a model file
// (coordinates array); count the named coordinates of either.
const coordinatesCount = sql<number>`(case
  when jsonb_typeof(${derivations.content}->'cells') = 'array' then (
    select count(*) from jsonb_array_elements(${derivations.content}->'cells') as cell,
      jsonb_array_elements(case when jsonb_typeof(cell->'rows') = 'array' then cell->'rows' else '[]'::jsonb end) as row
    where cell->>'kind' = 'coordinates' and btrim(coalesce(row->>'name', '')) <> '')
  when jsonb_typeof(${derivations.content}->'coordinates') = 'array' then jsonb_array_length(${derivations.content}->'coordinates')
  else 0 end)::int`;

export const derivationSortKeys = ["title", "status", "owner", "updatedAt", "createdAt", "coordinates"] as const;
export type DerivationSortKey = (typeof derivationSortKeys)[number];

const sortColumns: Record<DerivationSortKey, SQL | typeof derivations.title> = {
  title: sql`lower(${derivations.title})`,
  status: sql`${derivations.status}`,
  owner: sql`lower(coalesce(${users.name}, ''))`,
  updatedAt: sql`${derivations.updatedAt}`,
  createdAt: sql`${derivations.createdAt}`,
  coordinates: coordinatesCount,
};

const summaryColumns = {
  id: derivations.id,
  teamId: derivations.teamId,
  title: derivations.title,
  status: derivations.status,
  ownerId: derivations.ownerId,
  ownerName: users.name,
  updatedByName: updater.name,
  coordinatesCount,
  createdAt: derivations.createdAt,
  updatedAt: derivations.updatedAt,
};

interface DerivationFilters {
  teamId: string;
  status?: DerivationStatus;
  ownerId?: string;
  search?: string;
}

function derivationFilters({ teamId, status, ownerId, search }: DerivationFilters): SQL | undefined {
  const filters: SQL[] = [eq(derivations.teamId, teamId), notTrashed];
  if (status) filters.push(eq(derivations.status, status));
  if (ownerId) filters.push(eq(derivations.ownerId, ownerId));
  if (search) filters.push(ilike(derivations.title, `%${search.replace(/[\\%_]/g, (c) => `\\${c}`)}%`));
  return and(...filters);
}

/**
 * A team's derivations, optionally filtered, sorted (default: most recently
 * changed first) and paged (`page` from 1; all rows when `pageSize` is absent).
 */
export async function getDerivationsByTeamId({
  sort = "updatedAt",
  direction = sort === "updatedAt" || sort === "createdAt" ? "desc" : "asc",
  page = 1,
  pageSize,
  ...filters
}: DerivationFilters & { sort?: DerivationSortKey; direction?: "asc" | "desc"; page?: number; pageSize?: number }): Promise<DerivationSummary[]> {
  const order = direction === "asc" ? asc : desc;
  const query = db
    .select(summaryColumns)
    .from(derivations)
    .leftJoin(users, eq(users.id, derivations.ownerId))
    .leftJoin(updater, eq(updater.id, derivations.updatedById))
    .where(derivationFilters(filters))
    // The id breaks ties so pages never overlap.
    .orderBy(order(sortColumns[sort]), desc(derivations.updatedAt), asc(derivations.id));
  return pageSize === undefined ? query : query.limit(pageSize).offset((Math.max(1, page) - 1) * pageSize);
}

/** How many derivations match the same filters as getDerivationsByTeamId. */
export async function countDerivationsByTeamId(filters: DerivationFilters): Promise<number> {
  const [row] = await db.select({ total: count() }).from(derivations).where(derivationFilters(filters));
  return row?.total ?? 0;
}

/** A derivation that is not in the trash, with its owner's name; null when missing or trashed. */
export async function getDerivationById({ id }: { id: string }, executor: Executor = db): Promise<(Derivation & { ownerName: string | null }) | null> {
  const [row] = await executor
    .select({ derivation: derivations, ownerName: users.name })
    .from(derivations)
    .leftJoin(users, eq(users.id, derivations.ownerId))
    .where(and(eq(derivations.id, id), notTrashed))
    .limit(1);
  return row ? { ...row.derivation, ownerName: row.ownerName } : null;
}

/**
 * Creates a derivation and records it, in one transaction. With `files` and
 * `runs` (a notebook import) their rows are written in the same transaction,
 * their objects already stored by the caller. With `idempotency` the key is
 * claimed in the same transaction too: a request that finds it taken rolls
 * back and throws IdempotencyKeyTaken, so one key never makes two derivations.
 */
export async function createDerivation({
  id,
  teamId,
  title,
  ownerId,
  content,
  status = "draft",
  idempotency,
  files: attachedFiles = [],
  runs = [],
  auditDetails,
}: {
  id?: string;
  teamId: string;
  title: string;
  ownerId: string;
  /** Validated on its way in (`validDocumentOrThrow`). */
  content: DerivationDocument;
  status?: DerivationStatus;
  idempotency?: IdempotencyClaim;
  files?: (Omit<NewStoredFile, "derivationId"> & { id: string })[];
  runs?: (Omit<NewSimulationRun, "derivationId"> & { id: string })[];
  auditDetails?: Record<string, unknown>;
}): Promise<Derivation> {
  return db.transaction(async (tx) => {
    const derivation = returnedRow(
      await tx
        .insert(derivations)
        .values({ ...(id ? { id } : {}), teamId, title: title.trim(), ownerId, updatedById: ownerId, content, status })
        .returning(),
      "derivation",
    );
    if (idempotency) await claimIdempotencyKey({ claim: idempotency, derivationId: derivation.id }, tx);
    if (attachedFiles.length > 0) await tx.insert(files).values(attachedFiles.map((file) => ({ ...file, derivationId: derivation.id })));
    if (runs.length > 0) await tx.insert(simulationRuns).values(runs.map((run) => ({ ...run, derivationId: derivation.id })));
    await recordAuditEvent(
      {
        teamId,
        actorId: ownerId,
        action: "derivation.create",
        targetType: "derivation",
        targetId: derivation.id,
        ...(auditDetails ? { details: auditDetails } : {}),
      },
      tx,
    );
    return derivation;
  });
}

/** Renames or replaces the content; null (nothing changed) when the derivation is locked. */
export async function updateDerivationById({
  id,
  actorId,
  changes,
}: {
  id: string;
  actorId: string;
  changes: { title?: string; content?: DerivationDocument };
}): Promise<Derivation | null> {
  return db.transaction(async (tx) => {
    const current = await lockDerivationRow(tx, id);
    if (!current || current.lockedAt) return null;
    // A rename renames the document too, so the notebook's title follows the dashboard's.
    let content = changes.content;
    if (changes.title !== undefined) {
      const base = content ?? parseStoredDocument(current.content, { title: current.title });
      if ("schemaVersion" in base) content = { ...base, title: changes.title.trim() };
      else if (base.ok) content = { ...base.document, title: changes.title.trim() };
    }
    // Editors connected to the shared document receive the change.
    if (content !== undefined) await writeSharedDocInTransaction(tx, { derivationId: id, document: content });
    const derivation = returnedRow(
      await tx
        .update(derivations)
        .set({
          ...(changes.title !== undefined ? { title: changes.title.trim() } : {}),
          ...(content !== undefined ? { content } : {}),
          pendingAuthorIds: [...new Set([...current.pendingAuthorIds, actorId])],
          updatedById: actorId,
          updatedAt: new Date(),
        })
        .where(eq(derivations.id, id))
        .returning(),
      "derivation",
    );
    const fields = Object.keys(changes).filter((key) => changes[key as keyof typeof changes] !== undefined);
    await recordAuditEvent(
      { teamId: derivation.teamId, actorId, action: "derivation.update", targetType: "derivation", targetId: id, details: { fields } },
      tx,
    );
    return derivation;
  });
}

export interface TrashedDerivationSummary {
  id: string;
  teamId: string;
  title: string;
  status: DerivationStatus;
  ownerId: string | null;
  ownerName: string | null;
  deletedAt: Date;
  deletedById: string | null;
  deletedByName: string | null;
}

/** A team's trash, most recently deleted first: derivations deleted after `deletedAfter`. */
export async function getTrashedDerivationsByTeamId({ teamId, deletedAfter }: { teamId: string; deletedAfter: Date }): Promise<TrashedDerivationSummary[]> {
  const rows = await db
    .select({
      id: derivations.id,
      teamId: derivations.teamId,
      title: derivations.title,
      status: derivations.status,
      ownerId: derivations.ownerId,
      ownerName: users.name,
      deletedAt: derivations.deletedAt,
      deletedById: derivations.deletedById,
      deletedByName: deleter.name,
    })
    .from(derivations)
    .leftJoin(users, eq(users.id, derivations.ownerId))
    .leftJoin(deleter, eq(deleter.id, derivations.deletedById))
    .where(and(eq(derivations.teamId, teamId), isNotNull(derivations.deletedAt), gt(derivations.deletedAt, deletedAfter)))
    .orderBy(desc(derivations.deletedAt), asc(derivations.id));
  return rows.map((row) => ({ ...row, deletedAt: row.deletedAt! }));
}

/** A derivation in the trash (deleted after `deletedAfter`), with its owner's name; null otherwise. */
export async function getTrashedDerivationById({
  id,
  deletedAfter,
}: {
  id: string;
  deletedAfter: Date;
}): Promise<(Derivation & { ownerName: string | null }) | null> {
  const [row] = await db
    .select({ derivation: derivations, ownerName: users.name })
    .from(derivations)
    .leftJoin(users, eq(users.id, derivations.ownerId))
    .where(and(eq(derivations.id, id), isNotNull(derivations.deletedAt), gt(derivations.deletedAt, deletedAfter)))
    .limit(1);
  return row ? { ...row.derivation, ownerName: row.ownerName } : null;
}

/** Moves a derivation to its team's trash; null when it is missing or already there. */
export async function trashDerivationById({ id, actorId }: { id: string; actorId: string }): Promise<Derivation | null> {
  return db.transaction(async (tx) => {
    const now = new Date();
    const [trashed] = await tx
      .update(derivations)
      .set({ deletedAt: now, deletedById: actorId, updatedAt: now })
      .where(and(eq(derivations.id, id), notTrashed))
      .returning();
    if (!trashed) return null;
    await recordAuditEvent(
      { teamId: trashed.teamId, actorId, action: "derivation.delete", targetType: "derivation", targetId: id, details: { title: trashed.title, to: "trash" } },
      tx,
    );
    return trashed;
  });
}

/** Takes a derivation out of the trash (if it was deleted after `deletedAfter`); null otherwise. */
export async function restoreDerivationById({ id, actorId, deletedAfter }: { id: string; actorId: string; deletedAfter: Date }): Promise<Derivation | null> {
  return db.transaction(async (tx) => {
    const [restored] = await tx
      .update(derivations)
      .set({ deletedAt: null, deletedById: null, updatedAt: new Date() })
      .where(and(eq(derivations.id, id), isNotNull(derivations.deletedAt), gt(derivations.deletedAt, deletedAfter)))
      .returning();
    if (!restored) return null;
    await recordAuditEvent(
      { teamId: restored.teamId, actorId, action: "derivation.restore", targetType: "derivation", targetId: id, details: { title: restored.title } },
      tx,
    );
    return restored;
  });
}

/**
 * Removes trashed derivations of a team for good: those in `ids`, or every one
 * deleted at or before `deletedUpTo`, or both conditions together. Live derivations
 * are never touched. Files and runs go with their derivation (cascade); the
 * object keys they held are returned so the caller can delete the objects
 * once the rows are gone.
 */
export async function purgeTrashedDerivations({
  teamId,
  ids,
  deletedUpTo,
  actorId,
  reason,
}: {
  teamId: string;
  ids?: string[];
  deletedUpTo?: Date;
  actorId: string | null;
  reason: "expired" | "requested";
}): Promise<{ purged: { id: string; title: string }[]; objectKeys: string[] }> {
  if (ids?.length === 0) return { purged: [], objectKeys: [] };
  return db.transaction(async (tx) => {
    const conditions: SQL[] = [eq(derivations.teamId, teamId), isNotNull(derivations.deletedAt)];
    if (ids) conditions.push(inArray(derivations.id, ids));
    if (deletedUpTo) conditions.push(lte(derivations.deletedAt, deletedUpTo));
    // Lock the rows first so a concurrent restore either wins before this or finds nothing.
    const doomed = await tx
      .select({ id: derivations.id })
      .from(derivations)
      .where(and(...conditions))
      .for("update");
    if (doomed.length === 0) return { purged: [], objectKeys: [] };
    const doomedIds = doomed.map((row) => row.id);
    const fileKeys = await tx.select({ key: files.objectKey }).from(files).where(inArray(files.derivationId, doomedIds));
    const runKeys = await tx
      .select({ key: simulationRuns.trajectoryKey })
      .from(simulationRuns)
      .where(and(inArray(simulationRuns.derivationId, doomedIds), isNotNull(simulationRuns.trajectoryKey)));
    // Report files rendered by queue workers (lib/reports): their keys are in the completed jobs' results.
    const reportKeys = await tx
      .select({ key: sql<string | null>`${jobs.result}->>'objectKey'` })
      .from(jobs)
      .where(and(inArray(jobs.derivationId, doomedIds), eq(jobs.kind, "report"), eq(jobs.state, "completed")));
    const purged = await tx.delete(derivations).where(inArray(derivations.id, doomedIds)).returning({ id: derivations.id, title: derivations.title });
    for (const row of purged) {
      await recordAuditEvent(
        { teamId, actorId, action: "derivation.purge", targetType: "derivation", targetId: row.id, details: { title: row.title, reason } },
        tx,
      );
    }
    return {
      purged,
      objectKeys: [
        ...fileKeys.map((row) => row.key),
        ...runKeys.flatMap((row) => (row.key ? [row.key] : [])),
        ...reportKeys.flatMap((row) => (row.key ? [row.key] : [])),
      ],
    };
  });
}

/**
 * Saves a derivation's content if nobody changed the row since `baseUpdatedAt`
 * (compared to the millisecond, the precision a client sees). Returns null when
 * the row moved on, so the caller can answer 409 and the client can merge.
 * Autosave calls this every few seconds, so it is not written to the audit log;
 * updated_by / updated_at say who edited last.
 */
export async function updateDerivationContentById({
  id,
  actorId,
  content,
  baseUpdatedAt,
  coAuthorIds = [],
  fromSharedDocument = false,
}: {
  id: string;
  actorId: string;
  content: DerivationDocument;
  baseUpdatedAt?: Date;
  /** Others who changed the content along with `actorId` (they become the next revision's authors too). */
  coAuthorIds?: string[];
  /**
   * Set by the collaboration server when it writes the JSON copy of the shared
   * document: the row's title follows the document's, and the shared state is
   * left alone. Any other write also becomes an update of the shared state.
   */
  fromSharedDocument?: boolean;
}): Promise<SaveContentResult> {
  return db.transaction(async (tx) => {
    // The row lock orders this save against an approval of the same derivation; shared-document
    // appends go on meanwhile (they only wait for an approval, see appendSharedDocUpdate).
    const current = await lockDerivationRow(tx, id, "no key update");
    if (!current) return { status: "missing" } as const;
    if (current.lockedAt) return { status: "locked", derivation: current } as const;
    if (baseUpdatedAt && current.updatedAt.toISOString().slice(0, 23) !== baseUpdatedAt.toISOString().slice(0, 23)) {
      return { status: "conflict", derivation: current } as const;
    }
    const now = new Date();
    // After a pause in editing, the state the pause left is kept as an automatic revision.
    if (now.getTime() - current.updatedAt.getTime() >= AUTO_REVISION_PAUSE_MS && current.pendingAuthorIds.length > 0) {
      await currentRevision(tx, { derivation: current, kind: "auto", createdById: null });
    }
    const pendingAuthorIds = [...new Set([...(await pendingAuthorsOf(tx, id)), ...coAuthorIds, actorId])];
    if (!fromSharedDocument) await writeSharedDocInTransaction(tx, { derivationId: id, document: content });
    const title = content.title.trim();
    const saved = returnedRow(
      await tx
        .update(derivations)
        .set({ content, updatedById: actorId, updatedAt: now, pendingAuthorIds, ...(fromSharedDocument && title !== "" ? { title } : {}) })
        .where(eq(derivations.id, id))
        .returning(),
      "derivation",
    );
    // During long stretches of activity, at most every few minutes.
    const latest = await getLatestRevisionByDerivationId({ derivationId: id }, tx);
    if (!latest || now.getTime() - latest.createdAt.getTime() >= AUTO_REVISION_INTERVAL_MS) {
      await currentRevision(tx, { derivation: saved, kind: "auto", createdById: null });
    }
    return { status: "saved", derivation: saved } as const;
  });
}

async function pendingAuthorsOf(executor: Executor, id: string): Promise<string[]> {
  const [row] = await executor.select({ pending: derivations.pendingAuthorIds }).from(derivations).where(eq(derivations.id, id)).limit(1);
  return row?.pending ?? [];
}
