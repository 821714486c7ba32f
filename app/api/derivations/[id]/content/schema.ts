import { z } from "zod";
import { documentFromContent } from "@/lib/evaluation/document-content";
import { AppError } from "@/lib/errors";
import { parseStoredDocument, type DerivationDocument } from "@/lib/notebook/document";

/**
 * PUT /api/derivations/[id]/content: the whole notebook document, and the
 * updatedAt the client's copy is based on (omit it to overwrite regardless).
 */
export const saveContentSchema = z.object({
  document: z.unknown(),
  baseUpdatedAt: z.iso.datetime({ offset: true, error: "Send the updatedAt your copy is based on, as an ISO date-time." }).optional(),
});

/** The document schema's issues as field errors keyed `document.<path>`. */
export function documentOrFieldErrors(input: unknown): { ok: true; document: DerivationDocument } | { ok: false; fieldErrors: Record<string, string[]> } {
  const parsed = parseStoredDocument(input);
  if (parsed.ok) return parsed;
  const fieldErrors: Record<string, string[]> = {};
  for (const issue of parsed.issues.slice(0, 50)) (fieldErrors[issue.path ? `document.${issue.path}` : "document"] ??= []).push(issue.message);
  return { ok: false, fieldErrors };
}

/** A posted notebook document, validated; throws a 400 with field errors when it is not valid. */
export function validDocumentOrThrow(input: unknown): DerivationDocument {
  const parsed = documentOrFieldErrors(input);
  if (!parsed.ok) throw new AppError("bad_request:validation", "The notebook document is not valid.", { fieldErrors: parsed.fieldErrors });
  return parsed.document;
}

/** The document a request works on: the one it posted (unsaved edits included), else the stored one. */
export function documentForRequest(posted: unknown, derivation: { content: unknown; title: string }): DerivationDocument {
  return posted !== undefined ? validDocumentOrThrow(posted) : documentFromContent(derivation.content, derivation.title);
}
