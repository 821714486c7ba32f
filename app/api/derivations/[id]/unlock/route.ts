import { derivationRoute } from "@/lib/api/resource-route";
import { readJson } from "@/lib/api/route";
import { unlock } from "@/lib/review";
import { parseOrThrow } from "@/lib/validation/parse";
import { unlockSchema } from "@/lib/validation/review";

/** A lead unlocks an approved derivation with a written reason; it returns to draft and the approval stays in history. */
export const POST = derivationRoute<{ id: string }>("derivation:lock", async ({ request, user, derivation }) => {
  const { reason } = parseOrThrow(unlockSchema, await readJson(request));
  const result = await unlock({ derivationId: derivation.id, actorId: user.id, reason });
  return Response.json({ status: result.derivation.status, approval: result.approval });
});
