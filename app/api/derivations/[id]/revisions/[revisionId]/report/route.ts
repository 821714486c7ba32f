import { getRevisionByDerivationIdAndId } from "@/db/queries/revisions";
import { derivationRoute } from "@/lib/api/resource-route";
import { uuidPattern } from "@/lib/auth/access";
import { enforceRateLimits, rateLimits } from "@/lib/auth/rate-limit";
import { AppError } from "@/lib/errors";
import { queueReport } from "@/lib/jobs/service";
import { jobView } from "@/lib/jobs/views";

type Params = { id: string; revisionId: string };

/**
 * Queues the report of one revision as a file (a `report` job: a queue worker
 * derives the revision, renders the report with its comment threads as one
 * HTML file and stores it). Always 202 with the job: rendering never runs on
 * the request. The page polls GET …/jobs/[jobId]; once it completed, GET
 * …/jobs/[jobId]/download serves the file. Anyone who may read the
 * derivation may print its report.
 */
export const POST = derivationRoute<Params>("derivation:read", async ({ user, derivation, params }) => {
  await enforceRateLimits([[rateLimits.evaluateByUser, user.id]], "rate_limited:engine", "Too many reports in a short time. Wait a moment and try again.");
  const revision = uuidPattern.test(params.revisionId) ? await getRevisionByDerivationIdAndId({ derivationId: derivation.id, id: params.revisionId }) : null;
  if (!revision) throw new AppError("not_found:revision", "No such revision of this derivation.");
  const job = await queueReport({ derivation, userId: user.id, revisionId: revision.id });
  return Response.json({ job: jobView(job) }, { status: 202 });
});
