import { getStudyByIdAndDerivationId } from "@/db/queries/studies";
import { derivationRoute } from "@/lib/api/resource-route";
import { AppError } from "@/lib/errors";
import { cancelStudy, studyIdOf, studyView } from "@/lib/studies/service";

type Params = { id: string; studyId: string };

/**
 * Cancels a queued or running study: its waiting batches never start and the
 * running ones stop within a second; finished runs stay. Cancelling a study
 * that has ended changes nothing. 200 with the study as it then stands.
 */
export const POST = derivationRoute<Params>("derivation:simulate", async ({ derivation, params }) => {
  const id = studyIdOf(params.studyId);
  const study = await getStudyByIdAndDerivationId({ id, derivationId: derivation.id });
  if (!study) throw new AppError("not_found:study", "Study not found.");
  await cancelStudy(study);
  return Response.json({ study: await studyView((await getStudyByIdAndDerivationId({ id, derivationId: derivation.id }))!) });
});
