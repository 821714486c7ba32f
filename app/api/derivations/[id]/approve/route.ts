import { derivationRoute } from "@/lib/api/resource-route";
import { readJson } from "@/lib/api/route";
import { approve } from "@/lib/review";
import { parseOrThrow } from "@/lib/validation/parse";
import { approveSchema } from "@/lib/validation/review";

/**
 * A lead approves the latest revision, which locks the derivation at it. Refused
 * when the revision is not the latest, the content changed since, or the lead
 * made changes in it (a second person must approve).
 */
export const POST = derivationRoute<{ id: string }>("derivation:approve", async ({ request, user, derivation }) => {
  const { revisionId } = parseOrThrow(approveSchema, await readJson(request));
  const result = await approve({ derivationId: derivation.id, revisionId, approverId: user.id });
  return Response.json({
    approval: result.approval,
    revision: { id: result.revision.id, number: result.revision.number, contentHash: result.revision.contentHash },
    status: result.derivation.status,
  });
});
