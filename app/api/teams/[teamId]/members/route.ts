import { getMembersByTeamId } from "@/db/queries/teams";
import { apiRoute } from "@/lib/api/route";
import { loadTeamFor } from "@/lib/auth/access";
import { requireUser } from "@/lib/auth/session";
import { uuidField } from "@/lib/validation/fields";
import { parseOrThrow } from "@/lib/validation/parse";

export const GET = apiRoute<{ teamId: string }>(async (_request, { params }) => {
  const user = await requireUser();
  const teamId = parseOrThrow(uuidField, (await params).teamId);
  await loadTeamFor(user, teamId, "team:read");
  return Response.json({ members: await getMembersByTeamId({ teamId }) });
});
