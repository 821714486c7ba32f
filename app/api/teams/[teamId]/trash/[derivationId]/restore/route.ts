import { restoreDerivationById } from "@/db/queries/derivations";
import { apiRoute } from "@/lib/api/route";
import { loadTrashedDerivationFor } from "@/lib/auth/access";
import { requireUser } from "@/lib/auth/session";
import { trashCutoff } from "@/lib/derivations/trash";
import { AppError } from "@/lib/errors";

type Params = { teamId: string; derivationId: string };

/** Takes a derivation out of the trash (its owner or a lead), exactly as it was, runs and files included. */
export const POST = apiRoute<Params>(async (_request, { params }) => {
  const user = await requireUser();
  const { teamId, derivationId } = await params;
  const { derivation } = await loadTrashedDerivationFor(user, teamId, derivationId, "derivation:restore");
  const restored = await restoreDerivationById({ id: derivation.id, actorId: user.id, deletedAfter: trashCutoff() });
  if (!restored) throw new AppError("not_found:derivation", "Derivation not found in the trash.");
  return Response.json({ derivation: restored });
});
