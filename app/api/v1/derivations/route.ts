import { apiRoute } from "@/lib/api/route";
import { requireApiToken } from "@/lib/auth/api-tokens";
import { approvedDerivationsOfTeam } from "@/lib/public-api/approved";

/**
 * Public API, read-only: every derivation of the token's team that has an
 * approval, with its latest approval (kept while the derivation is unlocked for
 * edits, until a new approval), most recently approved first.
 * Authorization: `Bearer <team API token>`.
 */
export const GET = apiRoute(async (request) => {
  const { team } = await requireApiToken(request);
  const derivations = await approvedDerivationsOfTeam({ teamId: team.id });
  return Response.json({ team: { id: team.id, name: team.name }, derivations }, { headers: { "cache-control": "no-store" } });
});
