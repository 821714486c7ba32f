import { runRoute } from "@/lib/api/resource-route";
import { trajectoryOfRun } from "@/lib/runs/service";
import { runView } from "@/lib/runs/views";

type Params = { id: string; runId: string };

/** One stored run with its settings and trajectory, so teammates see the same plots. */
export const GET = runRoute<Params>("derivation:read", async ({ run }) => {
  return Response.json({ run: runView(run, await trajectoryOfRun(run)) });
});
