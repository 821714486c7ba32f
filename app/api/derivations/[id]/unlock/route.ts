import { apiRoute, readJson } from "@/lib/api/route";
import { loadDerivationFor } from "@/lib/auth/access";
import { requireUser } from "@/lib/auth/session";
import { unlock } from "@/lib/review";
import { parseOrThrow } from "@/lib/validation/parse";
import { unlockSchema } from "@/lib/validation/review";
import { derivationIdOf } from "../derivation-id";

/** A lead unlocks an approved derivation with a written reason; it returns to draft and the approval stays in history. */
export const POST = apiRoute<{ id: string }>(async (request, { params }) => {
  const user = await requireUser();
  const { derivation } = await loadDerivationFor(user, await derivationIdOf(params), "derivation:lock");
  const { reason } = parseOrThrow(unlockSchema, await readJson(request));
  const result = await unlock({ derivationId: derivation.id, actorId: user.id, reason });
  return Response.json({ status: result.derivation.status, approval: result.approval });
});
