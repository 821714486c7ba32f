import { getStudyByIdAndDerivationId } from "@/db/queries/studies";
import { derivationRoute } from "@/lib/api/resource-route";
import { AppError } from "@/lib/errors";
import { studyIdOf, studyView } from "@/lib/studies/service";

type Params = { id: string; studyId: string };

/** The study with its runs, envelope, worst cases and sensitivity (partial while it runs). */
export const GET = derivationRoute<Params>("derivation:read", async ({ derivation, params }) => {
  const study = await getStudyByIdAndDerivationId({ id: studyIdOf(params.studyId), derivationId: derivation.id });
  if (!study) throw new AppError("not_found:study", "Study not found.");
  return Response.json({ study: await studyView(study) });
});
