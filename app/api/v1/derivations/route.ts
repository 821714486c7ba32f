import { getDerivationsByTeamId } from "@/db/queries/derivations";
import { apiRoute } from "@/lib/api/route";
import { requireApiToken } from "@/lib/auth/api-tokens";

/**
 * Public API, read-only: the approved derivations of the token's team, most
 * recently approved first. Authorization: `Bearer <team API token>`.
 */
export const GET = apiRoute(async (request) => {
  const { team } = await requireApiToken(request);
  const rows = await getDerivationsByTeamId({ teamId: team.id, status: "approved" });
  return Response.json(
    {
      team: { id: team.id, name: team.name },
      derivations: rows.map((row) => ({
        id: row.id,
        title: row.title,
        status: row.status,
        coordinates: row.coordinatesCount,
        updatedAt: row.updatedAt.toISOString(),
      })),
    },
    { headers: { "cache-control": "no-store" } },
  );
});
