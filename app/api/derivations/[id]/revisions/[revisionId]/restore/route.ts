import { restoreRevision } from "@/db/queries/revisions";
import { derivationRoute } from "@/lib/api/resource-route";
import { uuidPattern } from "@/lib/auth/access";
import { AppError } from "@/lib/errors";

type Params = { id: string; revisionId: string };

/** Makes a revision's content current again, as a new revision (nothing is rewritten). */
export const POST = derivationRoute<Params>("derivation:edit", async ({ user, derivation, params }) => {
  const { revisionId } = params;
  if (!uuidPattern.test(revisionId)) throw new AppError("not_found:revision", "No such revision of this derivation.");
  const result = await restoreRevision({ derivationId: derivation.id, revisionId, actorId: user.id });
  if (!result.ok) {
    if (result.reason === "locked") throw new AppError("locked:derivation");
    throw new AppError("not_found:revision", "No such revision of this derivation.");
  }
  return Response.json({ revision: result.revision, updatedAt: result.derivation.updatedAt.toISOString() });
});
