import { getRevisionByDerivationIdAndId } from "@/db/queries/revisions";
import { derivationRoute } from "@/lib/api/resource-route";
import { uuidPattern } from "@/lib/auth/access";
import { AppError } from "@/lib/errors";

type Params = { id: string; revisionId: string };

/** One revision with its full content (stays readable after later edits and after an unlock). */
export const GET = derivationRoute<Params>("derivation:read", async ({ derivation, params }) => {
  const { revisionId } = params;
  const revision = uuidPattern.test(revisionId) ? await getRevisionByDerivationIdAndId({ derivationId: derivation.id, id: revisionId }) : null;
  if (!revision) throw new AppError("not_found:revision", "No such revision of this derivation.");
  return Response.json({ revision });
});
