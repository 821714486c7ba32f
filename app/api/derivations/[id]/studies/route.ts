import { getStudiesByDerivationIdAndCellId, getStudyByIdAndDerivationId } from "@/db/queries/studies";
import { derivationRoute } from "@/lib/api/resource-route";
import { readJson } from "@/lib/api/route";
import { enforceRateLimits, rateLimits } from "@/lib/auth/rate-limit";
import { queueStudy, studyView } from "@/lib/studies/service";
import { studyListItem } from "@/lib/studies/views";
import { parseOrThrow } from "@/lib/validation/parse";
import { QUEUE_STUDY_BODY_LIMIT, queueStudySchema, studyListQuerySchema } from "./schema";

type Params = { id: string };

/** A study cell's studies, newest first, without runs and figures. */
export const GET = derivationRoute<Params>("derivation:read", async ({ request, derivation }) => {
  const { cellId } = parseOrThrow(studyListQuerySchema, { cellId: new URL(request.url).searchParams.get("cellId") ?? "" });
  const studies = await getStudiesByDerivationIdAndCellId({ derivationId: derivation.id, cellId });
  return Response.json({ studies: studies.map((study) => studyListItem(study)) });
});

/**
 * Runs a study cell of the derivation's current content: checked against the
 * model (400 `bad_request:study` with field errors by path), recorded with the
 * revision it was queued on, and queued in batches for the queue workers.
 * 202 with the study; GET …/studies/[studyId] follows it.
 */
export const POST = derivationRoute<Params>("derivation:simulate", async ({ request, user, derivation }) => {
  await enforceRateLimits(
    [[rateLimits.simulateByUser, user.id]],
    "rate_limited:simulation",
    "Too many simulations in a short time. Wait a moment and try again.",
  );
  const { cellId } = parseOrThrow(queueStudySchema, await readJson(request, { limit: QUEUE_STUDY_BODY_LIMIT }));
  const queued = await queueStudy({ derivation, userId: user.id, cellId });
  const study = await getStudyByIdAndDerivationId({ id: queued.id, derivationId: derivation.id });
  return Response.json({ study: await studyView(study!) }, { status: 202 });
});
