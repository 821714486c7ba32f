import { deleteMembershipByTeamIdAndUserId, updateMemberRoleByTeamIdAndUserId } from "@/db/queries/teams";
import { apiRoute, readJson } from "@/lib/api/route";
import { idOrNotFound, loadTeamFor } from "@/lib/auth/access";
import { requireUser } from "@/lib/auth/session";
import { parseOrThrow } from "@/lib/validation/parse";
import { changeRoleSchema } from "@/lib/validation/teams";

type Params = { teamId: string; userId: string };

export const PATCH = apiRoute<Params>(async (request, { params }) => {
  const user = await requireUser();
  const { teamId, userId: rawUserId } = await params;
  await loadTeamFor(user, teamId, "team:manage-members");
  const userId = idOrNotFound(rawUserId, "member", "That person is not a member of this team.");
  const { role } = parseOrThrow(changeRoleSchema, await readJson(request));
  const membership = await updateMemberRoleByTeamIdAndUserId({ teamId, userId, role, actorId: user.id });
  return Response.json({ membership });
});

export const DELETE = apiRoute<Params>(async (_request, { params }) => {
  const user = await requireUser();
  const { teamId, userId: rawUserId } = await params;
  await loadTeamFor(user, teamId, "team:manage-members");
  const userId = idOrNotFound(rawUserId, "member", "That person is not a member of this team.");
  await deleteMembershipByTeamIdAndUserId({ teamId, userId, actorId: user.id });
  return new Response(null, { status: 204 });
});
