import { getStudyByIdAndDerivationId } from "@/db/queries/studies";
import { auditExport } from "@/lib/api/audit-export";
import { downloadResponse, fileBaseName } from "@/lib/api/download";
import { derivationRoute } from "@/lib/api/resource-route";
import { AppError } from "@/lib/errors";
import { studyCsvOf, studyIdOf } from "@/lib/studies/service";

type Params = { id: string; studyId: string };

/** One row per run of the study: case, parameters, status and failure, each watched name's extremes, checks; units in the header. */
export const GET = derivationRoute<Params>("derivation:read", async ({ user, derivation, params }) => {
  const study = await getStudyByIdAndDerivationId({ id: studyIdOf(params.studyId), derivationId: derivation.id });
  if (!study) throw new AppError("not_found:study", "Study not found.");
  const csv = await studyCsvOf(study);
  await auditExport({ actorId: user.id, derivation, format: "study-csv", details: { studyId: study.id } });
  const stamp = study.createdAt.toISOString().slice(0, 19).replace(/:/g, "-");
  return downloadResponse(csv, { filename: `${fileBaseName(derivation.title)}-study-${stamp}.csv`, contentType: "text/csv" });
});
