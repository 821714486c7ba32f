import { apiRoute, readJson } from "@/lib/api/route";
import { loadDerivationFor } from "@/lib/auth/access";
import { requireUser } from "@/lib/auth/session";
import { applyFittedValues } from "@/lib/runs/apply-fit";
import { parseOrThrow } from "@/lib/validation/parse";
import { derivationIdOf } from "../../derivation-id";
import { applyFitSchema } from "./schema";

type Params = { id: string };

/** Writes fitted values into the Parameters cell of the stored document (recorded in the audit log). */
export const POST = apiRoute<Params>(async (request, { params }) => {
  const user = await requireUser();
  const id = await derivationIdOf(params);
  const { derivation } = await loadDerivationFor(user, id, "derivation:edit");
  const input = parseOrThrow(applyFitSchema, await readJson(request));
  const applied = await applyFittedValues({
    derivation,
    actorId: user.id,
    values: input.values,
    fileId: input.fileId ?? null,
    baseUpdatedAt: input.baseUpdatedAt ? new Date(input.baseUpdatedAt) : undefined,
  });
  return Response.json({ applied });
});
