import "server-only";
import { applyFittedParametersByDerivationId } from "@/db/queries/fits";
import type { Derivation } from "@/db/schema";
import { AppError } from "@/lib/errors";
import { validDocumentOrThrow } from "@/lib/evaluation/document-content";
import { documentOf, withParameterValues } from "./service";

/** Writes fitted values into the stored document's Parameters cell, audited; 409 when the row moved on. */
export async function applyFittedValues({
  derivation,
  actorId,
  values,
  fileId,
  baseUpdatedAt,
}: {
  derivation: Derivation;
  actorId: string;
  values: Record<string, number>;
  fileId: string | null;
  baseUpdatedAt?: Date;
}): Promise<{ updatedAt: string; values: Record<string, number> }> {
  const document = validDocumentOrThrow(withParameterValues(documentOf(derivation), values));
  const saved = await applyFittedParametersByDerivationId({
    id: derivation.id,
    teamId: derivation.teamId,
    actorId,
    content: document,
    values,
    fileId,
    baseUpdatedAt,
  });
  if (!saved) throw new AppError("conflict:derivation", "Someone else saved this derivation since your copy was loaded.");
  return { updatedAt: saved.updatedAt.toISOString(), values };
}
