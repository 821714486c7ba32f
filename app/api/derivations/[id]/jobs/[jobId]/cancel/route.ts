import { derivationRoute } from "@/lib/api/resource-route";
import { getJobQueue } from "@/lib/jobs/boss";
import { assertMayCancel, jobOfDerivation } from "@/lib/jobs/service";
import { jobView } from "@/lib/jobs/views";

type Params = { id: string; jobId: string };

/**
 * Cancels a queued or running job: a worker never starts it, or stops it
 * (terminating its thread) within a second. 200 with the job as it then
 * stands; cancelling an ended job changes nothing. Runs and fits need
 * `derivation:simulate`; an evaluation or a report, being the one who asked for it.
 */
export const POST = derivationRoute<Params>("derivation:read", async ({ user, derivation, membership, params }) => {
  const job = await jobOfDerivation(derivation.id, params.jobId);
  assertMayCancel({ role: membership.role, userId: user.id, derivation, job });
  await getJobQueue().cancel(job);
  return Response.json({ job: jobView(await jobOfDerivation(derivation.id, job.id)) });
});
