import { updateDerivationContentById } from "@/db/queries/derivations";
import { validDocumentOrThrow } from "@/lib/evaluation/document-content";

/**
 * Stores a person's edit of a derivation's content the way the collaboration
 * server keeps the JSON copy current (the one document validation, then
 * `updateDerivationContentById`). Tests use it where a browser's edit would
 * reach the stored row; the old autosave route is retired.
 */
export async function storeContentAs(user: { id: string }, id: string, document: unknown) {
  return updateDerivationContentById({ id, actorId: user.id, content: validDocumentOrThrow(document) });
}
