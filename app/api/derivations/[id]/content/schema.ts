import { z } from "zod";
import { documentFromContent, validDocumentOrThrow } from "@/lib/evaluation/document-content";
import type { DerivationDocument } from "@/lib/notebook/document";

/**
 * PUT /api/derivations/[id]/content: the whole notebook document, and the
 * updatedAt the client's copy is based on (omit it to overwrite regardless).
 */
export const saveContentSchema = z.object({
  document: z.unknown(),
  baseUpdatedAt: z.iso.datetime({ offset: true, error: "Send the updatedAt your copy is based on, as an ISO date-time." }).optional(),
});

/** The document a request works on: the one it posted (unsaved edits included), else the stored one. */
export function documentForRequest(posted: unknown, derivation: { content: unknown; title: string }): DerivationDocument {
  return posted !== undefined ? validDocumentOrThrow(posted) : documentFromContent(derivation.content, derivation.title);
}
