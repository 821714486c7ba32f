import { deleteMembershipByTeamIdAndUserId, updateMemberRoleByTeamIdAndUserId } from "@/db/queries/teams";
import { apiRoute, readJson } from "@/lib/api/route";
import { loadTeamFor } from "@/lib/auth/access";
import { requireUser } from "@/lib/auth/session";
import { uuidField } from "@/lib/validation/fields";
import { parseOrThrow } from "@/lib/validation/parse";
import { changeRoleSchema } from "@/lib/validation/teams";

type Params = { teamId: string; userId: string };

export const PATCH = apiRoute<Params>(async (request, { params }) => {
  const user = await requireUser();
  const { teamId: rawTeamId, userId: rawUserId } = await params;
  const teamId = parseOrThrow(uuidField, rawTeamId);
  const userId = parseOrThrow(uuidField, rawUserId);
  await loadTeamFor(user, teamId, "team:manage-members");
  const { role } = parseOrThrow(changeRoleSchema, await readJson(request));
  const membership = await updateMemberRoleByTeamIdAndUserId({ teamId, userId, role, actorId: user.id });
  return Response.json({ membership });
});

export const DELETE = apiRoute<Params>(async (_request, { params }) => {
  const user = await requireUser();
  const { teamId: rawTeamId, userId: rawUserId } = await params;
  const teamId = parseOrThrow(uuidField, rawTeamId);
  const userId = parseOrThrow(uuidField, rawUserId);
  await loadTeamFor(user, teamId, "team:manage-members");
  await deleteMembershipByTeamIdAndUserId({ teamId, userId, actorId: user.id });
  return new Response(null, { status: 204 });
});
