import { getFileByIdAndDerivationId } from "@/db/queries/files";
import { derivationRoute } from "@/lib/api/resource-route";
import { readJson } from "@/lib/api/route";
import { assertCan } from "@/lib/auth/permissions";
import { AppError } from "@/lib/errors";
import { appErrorOfJob } from "@/lib/jobs/queue";
import { awaitJob, queueFit } from "@/lib/jobs/service";
import { jobView, prefersAsync } from "@/lib/jobs/views";
import { parseOrThrow } from "@/lib/validation/parse";
import { fitSchema } from "./schema";
import { enforceRateLimits, rateLimits } from "@/lib/auth/rate-limit";

type Params = { id: string };

/**
 * Fits parameters to an attached measured file by least squares, as a queued
 * job run by a queue worker with a time limit: fitted values with standard
 * errors, residual RMS and the measured-against-fitted overlay. With
 * `apply: true` the values are also written to the Parameters cell (lead, or
 * analyst on an unapproved derivation). With `Prefer: respond-async`: 202 with
 * the job (its result is this answer); otherwise the request waits for it.
 */
export const POST = derivationRoute<Params>("derivation:simulate", async ({ request, user, derivation, membership }) => {
  await enforceRateLimits(
    [[rateLimits.simulateByUser, user.id]],
    "rate_limited:simulation",
    "Too many simulations in a short time. Wait a moment and try again.",
  );
  const { apply, ...input } = parseOrThrow(fitSchema, await readJson(request));
  // Refuse before the (long) fit rather than after it.
  if (apply) assertCan(membership.role, "derivation:edit", { status: derivation.status });
  const file = await getFileByIdAndDerivationId({ id: input.fileId, derivationId: derivation.id });
  if (!file) throw new AppError("not_found:file", "File not found.", { fieldErrors: { fileId: ["No such file on this derivation."] } });

  const queued = await queueFit({ derivation, userId: user.id, request: input, apply: apply ?? false });
  if (prefersAsync(request)) return Response.json({ job: jobView(queued) }, { status: 202 });
  const job = await awaitJob(queued);
  if (job.state === "queued" || job.state === "running") return Response.json({ job: jobView(job) }, { status: 202 });
  if (job.state !== "completed") throw appErrorOfJob(job);
  return Response.json(job.result);
});
