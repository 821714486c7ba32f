import { getMembersByTeamId } from "@/db/queries/teams";
import { teamRoute } from "@/lib/api/resource-route";

export const GET = teamRoute<{ teamId: string }>("team:read", async ({ team }) => {
  return Response.json({ members: await getMembersByTeamId({ teamId: team.id }) });
});
