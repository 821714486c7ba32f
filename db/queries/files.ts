import "server-only";
import { and, desc, eq } from "drizzle-orm";
import { db, type Executor } from "../client";
import { files, users, type NewStoredFile, type StoredFile } from "../schema";
import { recordAuditEvent } from "./audit";

export type StoredFileWithUploader = StoredFile & { uploadedByName: string | null };

/** Records an uploaded file (its object already stored) and the audit event, in one transaction. */
export async function createFile({ file, teamId }: { file: NewStoredFile & { id: string }; teamId: string }): Promise<StoredFile> {
  return db.transaction(async (tx) => {
    const [row] = await tx.insert(files).values(file).returning();
    await recordAuditEvent(
      {
        teamId,
        actorId: file.uploadedById ?? null,
        action: "file.upload",
        targetType: "derivation",
        targetId: file.derivationId,
        details: { fileId: row!.id, kind: row!.kind, name: row!.originalName, sizeBytes: row!.sizeBytes },
      },
      tx,
    );
    return row!;
  });
}

export async function getFilesByDerivationId(
  { derivationId, limit = 200 }: { derivationId: string; limit?: number },
  executor: Executor = db,
): Promise<StoredFileWithUploader[]> {
  const rows = await executor
    .select({ file: files, uploadedByName: users.name })
    .from(files)
    .leftJoin(users, eq(users.id, files.uploadedById))
    .where(eq(files.derivationId, derivationId))
    .orderBy(desc(files.createdAt))
    .limit(limit);
  return rows.map((row) => ({ ...row.file, uploadedByName: row.uploadedByName }));
}

export async function getFileById({ id }: { id: string }, executor: Executor = db): Promise<StoredFile | null> {
  const [row] = await executor.select().from(files).where(eq(files.id, id)).limit(1);
  return row ?? null;
}

export async function getFileByIdAndDerivationId(
  { id, derivationId }: { id: string; derivationId: string },
  executor: Executor = db,
): Promise<StoredFile | null> {
  const [row] = await executor
    .select()
    .from(files)
    .where(and(eq(files.id, id), eq(files.derivationId, derivationId)))
    .limit(1);
  return row ?? null;
}

/** Deletes the row and records it; returns the deleted row (its object key) or null. */
export async function deleteFileById({ id, actorId, teamId }: { id: string; actorId: string; teamId: string }): Promise<StoredFile | null> {
  return db.transaction(async (tx) => {
    const [row] = await tx.delete(files).where(eq(files.id, id)).returning();
    if (!row) return null;
    await recordAuditEvent(
      { teamId, actorId, action: "file.delete", targetType: "derivation", targetId: row.derivationId, details: { fileId: row.id, name: row.originalName } },
      tx,
    );
    return row;
  });
}
