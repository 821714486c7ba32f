import { apiRoute } from "@/lib/api/route";
import { loadTrashedDerivationFor } from "@/lib/auth/access";
import { requireUser } from "@/lib/auth/session";
import { purgeFromTrash } from "@/lib/derivations/trash";
import { AppError } from "@/lib/errors";

type Params = { teamId: string; derivationId: string };

/** Removes a derivation from the trash for good, with its runs and files (a lead's decision; cannot be undone). */
export const DELETE = apiRoute<Params>(async (_request, { params }) => {
  const user = await requireUser();
  const { teamId, derivationId } = await params;
  const { derivation } = await loadTrashedDerivationFor(user, teamId, derivationId, "derivation:purge");
  if (!(await purgeFromTrash({ teamId: derivation.teamId, derivationId: derivation.id, actorId: user.id }))) {
    throw new AppError("not_found:derivation", "Derivation not found in the trash.");
  }
  return new Response(null, { status: 204 });
});
