import { apiRoute, readJson } from "@/lib/api/route";
import { loadDerivationFor } from "@/lib/auth/access";
import { requireUser } from "@/lib/auth/session";
import { recordReviewDecision } from "@/lib/review";
import { parseOrThrow } from "@/lib/validation/parse";
import { reviewDecisionSchema } from "@/lib/validation/review";
import { derivationIdOf } from "../../derivation-id";

/** A reviewer who was asked signs off or requests changes (with what to change). */
export const POST = apiRoute<{ id: string }>(async (request, { params }) => {
  const user = await requireUser();
  const { derivation } = await loadDerivationFor(user, await derivationIdOf(params), "derivation:review");
  const input = parseOrThrow(reviewDecisionSchema, await readJson(request));
  const result = await recordReviewDecision({ derivationId: derivation.id, reviewerId: user.id, decision: input.decision, comment: input.comment });
  return Response.json({ assignment: result.assignment });
});
