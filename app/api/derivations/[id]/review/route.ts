import { getReviewStateByDerivationId } from "@/db/queries/reviews";
import { apiRoute, readJson } from "@/lib/api/route";
import { loadDerivationFor } from "@/lib/auth/access";
import { requireUser } from "@/lib/auth/session";
import { askForReview } from "@/lib/review";
import { parseOrThrow } from "@/lib/validation/parse";
import { requestReviewSchema } from "@/lib/validation/review";
import { derivationIdOf } from "../derivation-id";

type Params = { id: string };

/** The latest review request with each reviewer's decision, and every approval of the derivation. */
export const GET = apiRoute<Params>(async (_request, { params }) => {
  const user = await requireUser();
  const { derivation } = await loadDerivationFor(user, await derivationIdOf(params), "derivation:read");
  return Response.json({ status: derivation.status, lockedRevisionId: derivation.lockedRevisionId, ...(await getReviewStateByDerivationId({ derivationId: derivation.id })) });
});

/** Requests review of the current content from chosen reviewers and leads (e-mail and notification). */
export const POST = apiRoute<Params>(async (request, { params }) => {
  const user = await requireUser();
  const { derivation } = await loadDerivationFor(user, await derivationIdOf(params), "derivation:request-review");
  const input = parseOrThrow(requestReviewSchema, await readJson(request));
  const result = await askForReview({ derivation, requesterId: user.id, reviewerIds: input.reviewerIds, message: input.message });
  return Response.json({ request: result.request, revision: { id: result.revision.id, number: result.revision.number, contentHash: result.revision.contentHash } }, { status: 201 });
});
