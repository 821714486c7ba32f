import { auditExport } from "@/lib/api/audit-export";
import { downloadResponse, fileBaseName } from "@/lib/api/download";
import { runRoute } from "@/lib/api/resource-route";
import { AppError } from "@/lib/errors";
import { trajectoryOfRun } from "@/lib/runs/service";
import { trajectoryCsv } from "@/lib/simulate";

type Params = { id: string; runId: string };

/**
 * The run's trajectory as CSV: t, coordinates, rates (and the energy function), then the model's outputs,
 * the constraints' multipliers and residuals when the run has them, with units in the header.
 */
export const GET = runRoute<Params>("derivation:read", async ({ user, derivation, run }) => {
  const trajectory = await trajectoryOfRun(run);
  if (!trajectory) throw new AppError("not_found:simulation", "The run's trajectory is missing from storage.");
  const units = run.summary.coordinateUnits ?? {};
  await auditExport({ actorId: user.id, derivation, format: "trajectory-csv", details: { runId: run.id } });
  const stamp = run.createdAt.toISOString().slice(0, 19).replace(/:/g, "-");
  return downloadResponse(trajectoryCsv(trajectory, units, run.summary.columnUnits ?? {}), {
    filename: `${fileBaseName(derivation.title)}-run-${stamp}.csv`,
    contentType: "text/csv",
  });
});
