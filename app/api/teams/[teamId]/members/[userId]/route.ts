import { deleteMembershipByTeamIdAndUserId, updateMemberRoleByTeamIdAndUserId } from "@/db/queries/teams";
import { teamRoute } from "@/lib/api/resource-route";
import { readJson } from "@/lib/api/route";
import { idOrNotFound } from "@/lib/auth/access";
import { parseOrThrow } from "@/lib/validation/parse";
import { changeRoleSchema } from "@/lib/validation/teams";

type Params = { teamId: string; userId: string };

export const PATCH = teamRoute<Params>("team:manage-members", async ({ request, params: { teamId, userId: rawUserId }, user }) => {
  const userId = idOrNotFound(rawUserId, "member", "That person is not a member of this team.");
  const { role } = parseOrThrow(changeRoleSchema, await readJson(request));
  const membership = await updateMemberRoleByTeamIdAndUserId({ teamId, userId, role, actorId: user.id });
  return Response.json({ membership });
});

export const DELETE = teamRoute<Params>("team:manage-members", async ({ params: { teamId, userId: rawUserId }, user }) => {
  const userId = idOrNotFound(rawUserId, "member", "That person is not a member of this team.");
  await deleteMembershipByTeamIdAndUserId({ teamId, userId, actorId: user.id });
  return new Response(null, { status: 204 });
});
