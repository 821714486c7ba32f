import { auditExport } from "@/lib/api/audit-export";
import { apiRoute } from "@/lib/api/route";
import { loadDerivationFor } from "@/lib/auth/access";
import { requireUser } from "@/lib/auth/session";
import { AppError } from "@/lib/errors";
import { trajectoryOfRun } from "@/lib/runs/service";
import { trajectoryCsv } from "@/lib/runs/trajectory";
import { safeFileName } from "@/lib/runs/uploads";
import { derivationIdOf } from "../../../derivation-id";
import { runOf } from "../run-id";

type Params = { id: string; runId: string };

/** The run's trajectory as CSV: t, coordinates, rates (and the energy function), with units in the header. */
export const GET = apiRoute<Params>(async (_request, { params }) => {
  const user = await requireUser();
  const id = await derivationIdOf(params);
  const { derivation } = await loadDerivationFor(user, id, "derivation:read");
  const run = await runOf(id, params);
  const trajectory = await trajectoryOfRun(run);
  if (!trajectory) throw new AppError("not_found:simulation", "The run's trajectory is missing from storage.");
  const units = (run.summary as { coordinateUnits?: Record<string, string> }).coordinateUnits ?? {};
  await auditExport({ actorId: user.id, derivation, format: "trajectory-csv", details: { runId: run.id } });
  const name = safeFileName(`${derivation.title} run ${run.createdAt.toISOString().slice(0, 19).replace(/:/g, "-")}.csv`, "run.csv");
  return new Response(trajectoryCsv(trajectory, units), {
    headers: {
      "content-type": "text/csv; charset=utf-8",
      "content-disposition": `attachment; filename="${name}"`,
      "x-content-type-options": "nosniff",
    },
  });
});
