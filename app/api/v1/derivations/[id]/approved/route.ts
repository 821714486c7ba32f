import { apiRoute } from "@/lib/api/route";
import { requireApiToken } from "@/lib/auth/api-tokens";
import { approvedDerivation } from "@/lib/public-api/approved";
import { AppError } from "@/lib/errors";
import { uuidField } from "@/lib/validation/fields";
import { parseOrThrow } from "@/lib/validation/parse";
import { approvedQuerySchema } from "./schema";

type Params = { id: string };

/**
 * Public API, read-only: the latest approved revision of a derivation of the
 * token's team (also while it is unlocked and edited, until a new approval),
 * its model file, its equations with the derivation CLI's keys and, with
 * `?language=`, generated code. Authorization: `Bearer <team API token>`.
 */
export const GET = apiRoute<Params>(async (request, { params }) => {
  const { team } = await requireApiToken(request);
  // An id that is not a uuid cannot exist; answer as for any missing derivation.
  const id = uuidField.safeParse((await params).id);
  if (!id.success) throw new AppError("not_found:derivation", "No derivation with this id in the token's team.");
  const { language } = parseOrThrow(approvedQuerySchema, Object.fromEntries(new URL(request.url).searchParams));
  const { body } = await approvedDerivation({ teamId: team.id, derivationId: id.data, language });
  return Response.json(body, { headers: { "cache-control": "no-store" } });
});
