import { restoreRevision } from "@/db/queries/revisions";
import { apiRoute } from "@/lib/api/route";
import { loadDerivationFor, uuidPattern } from "@/lib/auth/access";
import { requireUser } from "@/lib/auth/session";
import { AppError } from "@/lib/errors";
import { derivationIdOf } from "../../../derivation-id";

type Params = { id: string; revisionId: string };

/** Makes a revision's content current again, as a new revision (nothing is rewritten). */
export const POST = apiRoute<Params>(async (_request, { params }) => {
  const user = await requireUser();
  const { derivation } = await loadDerivationFor(user, await derivationIdOf(params), "derivation:edit");
  const { revisionId } = await params;
  if (!uuidPattern.test(revisionId)) throw new AppError("not_found:revision", "No such revision of this derivation.");
  const result = await restoreRevision({ derivationId: derivation.id, revisionId, actorId: user.id });
  if (!result.ok) {
    if (result.reason === "locked") throw new AppError("locked:derivation");
    throw new AppError("not_found:revision", "No such revision of this derivation.");
  }
  return Response.json({ revision: result.revision, updatedAt: result.derivation.updatedAt.toISOString() });
});
