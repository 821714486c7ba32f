import "server-only";
import { and, eq, sql, type SQL } from "drizzle-orm";
import { db } from "../client";
import type { DerivationDocument } from "@/lib/notebook/document";
import { derivations, type Derivation } from "../schema";
import { recordAuditEvent } from "./audit";
import { writeSharedDocInTransaction } from "./collab";

/**
 * Writes fitted parameter values into a derivation's document and records who
 * applied which values from which file, in one transaction. Returns null when
 * the row changed since `baseUpdatedAt` (the caller answers 409).
 */
export async function applyFittedParametersByDerivationId({
  id,
  teamId,
  actorId,
  content,
  values,
  fileId,
  baseUpdatedAt,
}: {
  id: string;
  teamId: string;
  actorId: string;
  content: DerivationDocument;
  values: Record<string, number>;
  fileId: string | null;
  baseUpdatedAt?: Date;
}): Promise<Derivation | null> {
  return db.transaction(async (tx) => {
    const conditions: SQL[] = [eq(derivations.id, id)];
    if (baseUpdatedAt) conditions.push(sql`date_trunc('milliseconds', ${derivations.updatedAt}) = ${baseUpdatedAt.toISOString()}::timestamptz`);
    const [derivation] = await tx
      .update(derivations)
      .set({ content, updatedById: actorId, updatedAt: new Date() })
      .where(and(...conditions))
      .returning();
    if (!derivation) return null;
    // Editors connected to the shared document receive the fitted values.
    await writeSharedDocInTransaction(tx, { derivationId: id, document: content });
    await recordAuditEvent({ teamId, actorId, action: "derivation.fit_apply", targetType: "derivation", targetId: id, details: { values, fileId } }, tx);
    return derivation;
  });
}
