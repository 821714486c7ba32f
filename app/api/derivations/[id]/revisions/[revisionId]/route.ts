import { getRevisionByDerivationIdAndId } from "@/db/queries/revisions";
import { apiRoute } from "@/lib/api/route";
import { loadDerivationFor, uuidPattern } from "@/lib/auth/access";
import { requireUser } from "@/lib/auth/session";
import { AppError } from "@/lib/errors";
import { derivationIdOf } from "../../derivation-id";

type Params = { id: string; revisionId: string };

/** One revision with its full content (stays readable after later edits and after an unlock). */
export const GET = apiRoute<Params>(async (_request, { params }) => {
  const user = await requireUser();
  const { derivation } = await loadDerivationFor(user, await derivationIdOf(params), "derivation:read");
  const { revisionId } = await params;
  const revision = uuidPattern.test(revisionId) ? await getRevisionByDerivationIdAndId({ derivationId: derivation.id, id: revisionId }) : null;
  if (!revision) throw new AppError("not_found:revision", "No such revision of this derivation.");
  return Response.json({ revision });
});
