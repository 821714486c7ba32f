import { derivationRoute } from "@/lib/api/resource-route";
import { readJson } from "@/lib/api/route";
import { recordReviewDecision } from "@/lib/review";
import { parseOrThrow } from "@/lib/validation/parse";
import { reviewDecisionSchema } from "@/lib/validation/review";

/** A reviewer who was asked signs off or requests changes (with what to change). */
export const POST = derivationRoute<{ id: string }>("derivation:review", async ({ request, user, derivation }) => {
  const input = parseOrThrow(reviewDecisionSchema, await readJson(request));
  const result = await recordReviewDecision({ derivationId: derivation.id, reviewerId: user.id, decision: input.decision, comment: input.comment });
  return Response.json({ assignment: result.assignment });
});
