import { derivationRoute } from "@/lib/api/resource-route";
import { jobOfDerivation } from "@/lib/jobs/service";
import { jobView } from "@/lib/jobs/views";

type Params = { id: string; jobId: string };

/** A queued run or fit: its state, progress and, once ended, its answer or error (the page polls this). */
export const GET = derivationRoute<Params>("derivation:read", async ({ derivation, params }) => {
  return Response.json({ job: jobView(await jobOfDerivation(derivation.id, params.jobId)) });
});
