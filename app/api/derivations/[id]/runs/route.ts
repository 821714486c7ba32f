import { getSimulationRunsByDerivationId } from "@/db/queries/runs";
import { apiRoute, readJson } from "@/lib/api/route";
import { loadDerivationFor } from "@/lib/auth/access";
import { requireUser } from "@/lib/auth/session";
import { runAndStoreSimulation, trajectoryOfRun } from "@/lib/runs/service";
import { runView } from "@/lib/runs/views";
import { parseOrThrow } from "@/lib/validation/parse";
import { derivationIdOf } from "../derivation-id";
import { runSettingsSchema } from "./schema";

type Params = { id: string };

/** Stored runs of the derivation, newest first, without trajectories. */
export const GET = apiRoute<Params>(async (_request, { params }) => {
  const user = await requireUser();
  const id = await derivationIdOf(params);
  await loadDerivationFor(user, id, "derivation:read");
  const runs = await getSimulationRunsByDerivationId({ derivationId: id });
  return Response.json({ runs: runs.map((run) => runView(run)) });
});

/**
 * Runs a simulation on the server and stores it. 201 with the run and its
 * trajectory, whether it completed or failed part-way (a failed run carries
 * its reason, the time reached and the trajectory up to there).
 */
export const POST = apiRoute<Params>(async (request, { params }) => {
  const user = await requireUser();
  const id = await derivationIdOf(params);
  const { derivation } = await loadDerivationFor(user, id, "derivation:simulate");
  const settings = parseOrThrow(runSettingsSchema, await readJson(request));
  const run = await runAndStoreSimulation({ derivation, userId: user.id, settings });
  const trajectory = await trajectoryOfRun(run);
  return Response.json({ run: runView({ ...run, createdByName: user.name }, trajectory) }, { status: 201 });
});
