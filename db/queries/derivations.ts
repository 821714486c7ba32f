import "server-only";
import { returnedRow } from "./returned-row";
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
import { and, asc, count, desc, eq, ilike, sql, type SQL } from "drizzle-orm";
import { alias } from "drizzle-orm/pg-core";
import { db, type Executor } from "../client";
import type { DerivationDocument } from "@/lib/notebook/document";
import { derivations, users, type Derivation, type DerivationStatus } from "../schema";
import { recordAuditEvent } from "./audit";

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
  const filters: SQL[] = [eq(derivations.teamId, teamId)];
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

export async function getDerivationById({ id }: { id: string }, executor: Executor = db): Promise<(Derivation & { ownerName: string | null }) | null> {
  const [row] = await executor
    .select({ derivation: derivations, ownerName: users.name })
    .from(derivations)
    .leftJoin(users, eq(users.id, derivations.ownerId))
    .where(eq(derivations.id, id))
    .limit(1);
  return row ? { ...row.derivation, ownerName: row.ownerName } : null;
}

export async function createDerivation({
  teamId,
  title,
  ownerId,
  content,
  status = "draft",
}: {
  teamId: string;
  title: string;
  ownerId: string;
  /** Validated on its way in (`validDocumentOrThrow`). */
  content: DerivationDocument;
  status?: DerivationStatus;
}): Promise<Derivation> {
  return db.transaction(async (tx) => {
    const derivation = returnedRow(
      await tx.insert(derivations).values({ teamId, title: title.trim(), ownerId, updatedById: ownerId, content, status }).returning(),
      "derivation",
    );
    await recordAuditEvent({ teamId, actorId: ownerId, action: "derivation.create", targetType: "derivation", targetId: derivation.id }, tx);
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
    const derivation = returnedRow(
      await tx
        .update(derivations)
        .set({
          ...(changes.title !== undefined ? { title: changes.title.trim() } : {}),
          ...(changes.content !== undefined ? { content: changes.content } : {}),
          pendingAuthorIds: [...new Set([...current.pendingAuthorIds, actorId])],
          updatedById: actorId,
          updatedAt: new Date(),
        })
        .where(eq(derivations.id, id))
        .returning(),
      "derivation",
    );
    const fields = Object.keys(changes).filter((key) => changes[key as keyof typeof changes] !== undefined);
    await recordAuditEvent({ teamId: derivation.teamId, actorId, action: "derivation.update", targetType: "derivation", targetId: id, details: { fields } }, tx);
    return derivation;
  });
}

export async function deleteDerivationById({ id, actorId }: { id: string; actorId: string }): Promise<void> {
  await db.transaction(async (tx) => {
    const [deleted] = await tx.delete(derivations).where(eq(derivations.id, id)).returning({ teamId: derivations.teamId, title: derivations.title });
    if (deleted) {
      await recordAuditEvent(
        { teamId: deleted.teamId, actorId, action: "derivation.delete", targetType: "derivation", targetId: id, details: { title: deleted.title } },
        tx,
      );
    }
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
}: {
  id: string;
  actorId: string;
  content: DerivationDocument;
  baseUpdatedAt?: Date;
}): Promise<SaveContentResult> {
  return db.transaction(async (tx) => {
    // The row lock orders this save against an approval of the same derivation.
    const current = await lockDerivationRow(tx, id);
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
    const pendingAuthorIds = [...new Set([...(await pendingAuthorsOf(tx, id)), actorId])];
    const saved = returnedRow(
      await tx.update(derivations).set({ content, updatedById: actorId, updatedAt: now, pendingAuthorIds }).where(eq(derivations.id, id)).returning(),
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
