import { getMembersByTeamId } from "@/db/queries/teams";
import { apiRoute } from "@/lib/api/route";
import { loadTeamFor } from "@/lib/auth/access";
import { requireUser } from "@/lib/auth/session";

export const GET = apiRoute<{ teamId: string }>(async (_request, { params }) => {
  const user = await requireUser();
  const teamId = (await params).teamId;
  await loadTeamFor(user, teamId, "team:read");
  return Response.json({ members: await getMembersByTeamId({ teamId }) });
});
