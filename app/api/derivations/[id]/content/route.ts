import { updateDerivationContentById } from "@/db/queries/derivations";
import { derivationRoute } from "@/lib/api/resource-route";
import { readJson } from "@/lib/api/route";
import { AppError } from "@/lib/errors";
import { validDocumentOrThrow } from "@/lib/evaluation/document-content";
import { parseOrThrow } from "@/lib/validation/parse";
import { saveContentSchema } from "./schema";

type Params = { id: string };

/** Autosave target: stores the notebook document; 409 when the row changed since the client's copy. */
export const PUT = derivationRoute<Params>("derivation:edit", async ({ request, user, derivation: { id } }) => {
  const input = parseOrThrow(saveContentSchema, await readJson(request));
  const document = validDocumentOrThrow(input.document);
  const saved = await updateDerivationContentById({
    id,
    actorId: user.id,
    content: document,
    baseUpdatedAt: input.baseUpdatedAt ? new Date(input.baseUpdatedAt) : undefined,
  });
  if (saved.status === "missing") throw new AppError("not_found:derivation", "Derivation not found.");
  // Approved between the page's load and this save: the approval won the race.
  if (saved.status === "locked")
    throw new AppError("locked:derivation", "This derivation was approved and locked while you were editing. Your last change was not saved.");
  if (saved.status === "conflict") {
    throw new AppError("conflict:derivation", "Someone else saved this derivation since your copy was loaded.", {
      details: { updatedAt: saved.derivation.updatedAt.toISOString(), updatedById: saved.derivation.updatedById },
    });
  }
  return Response.json({ updatedAt: saved.derivation.updatedAt.toISOString(), updatedById: saved.derivation.updatedById });
});
