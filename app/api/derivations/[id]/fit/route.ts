import { getFileByIdAndDerivationId } from "@/db/queries/files";
import { derivationRoute } from "@/lib/api/resource-route";
import { readJson } from "@/lib/api/route";
import { assertCan } from "@/lib/auth/permissions";
import { AppError } from "@/lib/errors";
import { applyFittedValues } from "@/lib/runs/apply-fit";
import { fitToMeasuredFile } from "@/lib/runs/service";
import { parseOrThrow } from "@/lib/validation/parse";
import { fitSchema } from "./schema";
import { enforceRateLimits, rateLimits } from "@/lib/auth/rate-limit";

type Params = { id: string };

/**
 * Fits parameters to an attached measured file by least squares, in a worker
 * with a time limit: fitted values with standard errors, residual RMS and the
 * measured-against-fitted overlay. With `apply: true` the values are also
 * written to the Parameters cell (lead, or analyst on an unapproved derivation).
 */
export const POST = derivationRoute<Params>("derivation:simulate", async ({ request, user, derivation, membership }) => {
  await enforceRateLimits(
    [[rateLimits.simulateByUser, user.id]],
    "rate_limited:simulation",
    "Too many simulations in a short time. Wait a moment and try again.",
  );
  const input = parseOrThrow(fitSchema, await readJson(request));
  // Refuse before the (long) fit rather than after it.
  if (input.apply) assertCan(membership.role, "derivation:edit", { status: derivation.status });
  const file = await getFileByIdAndDerivationId({ id: input.fileId, derivationId: derivation.id });
  if (!file) throw new AppError("not_found:file", "File not found.", { fieldErrors: { fileId: ["No such file on this derivation."] } });

  const result = await fitToMeasuredFile({ derivation, request: { ...input, file } });
  let applied = null;
  if (input.apply) {
    const values = Object.fromEntries(result.fit.parameters.map((p) => [p.name, p.value]));
    applied = await applyFittedValues({ derivation, actorId: user.id, values, fileId: file.id, baseUpdatedAt: derivation.updatedAt });
  }
  return Response.json({ ...result, applied });
});
