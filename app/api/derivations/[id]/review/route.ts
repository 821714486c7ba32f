import { getReviewStateByDerivationId } from "@/db/queries/reviews";
import { derivationRoute } from "@/lib/api/resource-route";
import { readJson } from "@/lib/api/route";
import { askForReview } from "@/lib/review";
import { parseOrThrow } from "@/lib/validation/parse";
import { requestReviewSchema } from "@/lib/validation/review";

type Params = { id: string };

/** The latest review request with each reviewer's decision, and every approval of the derivation. */
export const GET = derivationRoute<Params>("derivation:read", async ({ derivation }) => {
  return Response.json({
    status: derivation.status,
    lockedRevisionId: derivation.lockedRevisionId,
    ...(await getReviewStateByDerivationId({ derivationId: derivation.id })),
  });
});

/** Requests review of the current content from chosen reviewers and leads (e-mail and notification). */
export const POST = derivationRoute<Params>("derivation:request-review", async ({ request, user, derivation }) => {
  const input = parseOrThrow(requestReviewSchema, await readJson(request));
  const result = await askForReview({ derivation, requesterId: user.id, reviewerIds: input.reviewerIds, message: input.message });
  return Response.json(
    { request: result.request, revision: { id: result.revision.id, number: result.revision.number, contentHash: result.revision.contentHash } },
    { status: 201 },
  );
});
