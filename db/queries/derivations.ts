import "server-only";
import { and, desc, eq, ilike, type SQL } from "drizzle-orm";
import { alias } from "drizzle-orm/pg-core";
import { db, type Executor } from "../client";
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
  createdAt: Date;
  updatedAt: Date;
}

const updater = alias(users, "updater");

const summaryColumns = {
  id: derivations.id,
  teamId: derivations.teamId,
  title: derivations.title,
  status: derivations.status,
  ownerId: derivations.ownerId,
  ownerName: users.name,
  updatedByName: updater.name,
  createdAt: derivations.createdAt,
  updatedAt: derivations.updatedAt,
};

/** A team's derivations, most recently changed first, optionally filtered. */
export async function getDerivationsByTeamId({
  teamId,
  status,
  ownerId,
  search,
}: {
  teamId: string;
  status?: DerivationStatus;
  ownerId?: string;
  search?: string;
}): Promise<DerivationSummary[]> {
  const filters: SQL[] = [eq(derivations.teamId, teamId)];
  if (status) filters.push(eq(derivations.status, status));
  if (ownerId) filters.push(eq(derivations.ownerId, ownerId));
  if (search) filters.push(ilike(derivations.title, `%${search.replace(/[\\%_]/g, (c) => `\\${c}`)}%`));
  return db
    .select(summaryColumns)
    .from(derivations)
    .leftJoin(users, eq(users.id, derivations.ownerId))
    .leftJoin(updater, eq(updater.id, derivations.updatedById))
    .where(and(...filters))
    .orderBy(desc(derivations.updatedAt));
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
  content = {},
  status = "draft",
}: {
  teamId: string;
  title: string;
  ownerId: string;
  content?: Record<string, unknown>;
  status?: DerivationStatus;
}): Promise<Derivation> {
  return db.transaction(async (tx) => {
    const [derivation] = await tx
      .insert(derivations)
      .values({ teamId, title: title.trim(), ownerId, updatedById: ownerId, content, status })
      .returning();
    await recordAuditEvent({ teamId, actorId: ownerId, action: "derivation.create", targetType: "derivation", targetId: derivation.id }, tx);
    return derivation;
  });
}

export async function updateDerivationById({
  id,
  actorId,
  changes,
}: {
  id: string;
  actorId: string;
  changes: { title?: string; status?: DerivationStatus; content?: Record<string, unknown> };
}): Promise<Derivation> {
  return db.transaction(async (tx) => {
    const [derivation] = await tx
      .update(derivations)
      .set({
        ...(changes.title !== undefined ? { title: changes.title.trim() } : {}),
        ...(changes.status !== undefined ? { status: changes.status } : {}),
        ...(changes.content !== undefined ? { content: changes.content } : {}),
        updatedById: actorId,
        updatedAt: new Date(),
      })
      .where(eq(derivations.id, id))
      .returning();
    await recordAuditEvent(
      { teamId: derivation.teamId, actorId, action: "derivation.update", targetType: "derivation", targetId: id, details: { fields: Object.keys(changes) } },
      tx,
    );
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
