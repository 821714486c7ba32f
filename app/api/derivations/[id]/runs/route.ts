import { getSimulationRunsByDerivationId } from "@/db/queries/runs";
import { derivationRoute } from "@/lib/api/resource-route";
import { readJson } from "@/lib/api/route";
import { runAndStoreSimulation, trajectoryOfRun } from "@/lib/runs/service";
import { runView } from "@/lib/runs/views";
import { parseOrThrow } from "@/lib/validation/parse";
import { runSettingsSchema } from "./schema";
import { enforceRateLimits, rateLimits } from "@/lib/auth/rate-limit";

type Params = { id: string };

/** Stored runs of the derivation, newest first, without trajectories. */
export const GET = derivationRoute<Params>("derivation:read", async ({ derivation }) => {
  const runs = await getSimulationRunsByDerivationId({ derivationId: derivation.id });
  return Response.json({ runs: runs.map((run) => runView(run)) });
});

/**
 * Runs a simulation on the server and stores it. 201 with the run and its
 * trajectory, whether it completed or failed part-way (a failed run carries
 * its reason, the time reached and the trajectory up to there).
 */
export const POST = derivationRoute<Params>("derivation:simulate", async ({ request, user, derivation }) => {
  await enforceRateLimits(
    [[rateLimits.simulateByUser, user.id]],
    "rate_limited:simulation",
    "Too many simulations in a short time. Wait a moment and try again.",
  );
  const settings = parseOrThrow(runSettingsSchema, await readJson(request));
  const run = await runAndStoreSimulation({ derivation, userId: user.id, settings });
  const trajectory = await trajectoryOfRun(run);
  return Response.json({ run: runView({ ...run, createdByName: user.name }, trajectory) }, { status: 201 });
});
