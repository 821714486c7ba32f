import { apiRoute } from "@/lib/api/route";
import { loadDerivationFor } from "@/lib/auth/access";
import { requireUser } from "@/lib/auth/session";
import { trajectoryOfRun } from "@/lib/runs/service";
import { runView } from "@/lib/runs/views";
import { derivationIdOf } from "../../derivation-id";
import { runOf } from "./run-id";

type Params = { id: string; runId: string };

/** One stored run with its settings and trajectory, so teammates see the same plots. */
export const GET = apiRoute<Params>(async (_request, { params }) => {
  const user = await requireUser();
  const id = await derivationIdOf(params);
  await loadDerivationFor(user, id, "derivation:read");
  const run = await runOf(id, params);
  return Response.json({ run: runView(run, await trajectoryOfRun(run)) });
});
