import { getStudyByIdAndDerivationId } from "@/db/queries/studies";
import { derivationRoute } from "@/lib/api/resource-route";
import { enforceRateLimits, rateLimits } from "@/lib/auth/rate-limit";
import { AppError } from "@/lib/errors";
import { jobView } from "@/lib/jobs/views";
import { openStudyRun, studyIdOf } from "@/lib/studies/service";

type Params = { id: string; studyId: string; index: string };

/**
 * Queues an ordinary server simulation of one run of the study (its case and
 * parameter values, on the content the study ran), so the whole trajectory can
 * be looked at like any server run. 202 with the simulation job.
 */
export const POST = derivationRoute<Params>("derivation:simulate", async ({ user, derivation, params }) => {
  const study = await getStudyByIdAndDerivationId({ id: studyIdOf(params.studyId), derivationId: derivation.id });
  if (!study) throw new AppError("not_found:study", "Study not found.");
  if (!/^\d{1,5}$/.test(params.index)) throw new AppError("not_found:study", "The study has no run with this index.");
  await enforceRateLimits(
    [[rateLimits.simulateByUser, user.id]],
    "rate_limited:simulation",
    "Too many simulations in a short time. Wait a moment and try again.",
  );
  const job = await openStudyRun({ derivation, userId: user.id, study, index: Number(params.index) });
  return Response.json({ job: jobView(job) }, { status: 202 });
});
