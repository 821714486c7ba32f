import { updateDerivationContentById } from "@/db/queries/derivations";
import { derivationRoute } from "@/lib/api/resource-route";
import { readJson } from "@/lib/api/route";
import { loadDerivationFor } from "@/lib/auth/access";
import { AppError } from "@/lib/errors";
import { parseOrThrow } from "@/lib/validation/parse";
import { saveContentSchema, validDocumentOrThrow } from "./schema";

type Params = { id: string };

/** Autosave target: stores the notebook document; 409 when the row changed since the client's copy. */
export const PUT = derivationRoute<Params>("derivation:edit", async ({ request, user, derivation: { id } }) => {
  const input = parseOrThrow(saveContentSchema, await readJson(request));
  const document = validDocumentOrThrow(input.document);
  const saved = await updateDerivationContentById({
    id,
    actorId: user.id,
    content: document as unknown as Record<string, unknown>,
    baseUpdatedAt: input.baseUpdatedAt ? new Date(input.baseUpdatedAt) : undefined,
  });
  if (!saved) {
    const { derivation } = await loadDerivationFor(user, id, "derivation:read");
    throw new AppError("conflict:derivation", "Someone else saved this derivation since your copy was loaded.", {
      details: { updatedAt: derivation.updatedAt.toISOString(), updatedById: derivation.updatedById },
    });
  }
  return Response.json({ updatedAt: saved.updatedAt.toISOString(), updatedById: saved.updatedById });
});
