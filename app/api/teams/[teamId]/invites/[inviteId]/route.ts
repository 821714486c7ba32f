import { revokeInviteById } from "@/db/queries/invites";
import { apiRoute } from "@/lib/api/route";
import { idOrNotFound, loadTeamFor } from "@/lib/auth/access";
import { requireUser } from "@/lib/auth/session";

type Params = { teamId: string; inviteId: string };

/** Withdraws an open invitation: its link stops working. Whoever may invite may withdraw. */
export const DELETE = apiRoute<Params>(async (_request, { params }) => {
  const user = await requireUser();
  const { teamId, inviteId: rawInviteId } = await params;
  await loadTeamFor(user, teamId, "team:invite");
  const inviteId = idOrNotFound(rawInviteId, "invite", "That invitation is no longer open.");
  await revokeInviteById({ teamId, inviteId, actorId: user.id });
  return new Response(null, { status: 204 });
});
