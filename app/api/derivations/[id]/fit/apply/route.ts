import { derivationRoute } from "@/lib/api/resource-route";
import { readJson } from "@/lib/api/route";
import { applyFittedValues } from "@/lib/runs/apply-fit";
import { parseOrThrow } from "@/lib/validation/parse";
import { applyFitSchema } from "./schema";

type Params = { id: string };

/** Writes fitted values into the Parameters cell of the stored document (recorded in the audit log). */
export const POST = derivationRoute<Params>("derivation:edit", async ({ request, user, derivation }) => {
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
