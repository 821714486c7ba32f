import { revokeInviteById } from "@/db/queries/invites";
import { teamRoute } from "@/lib/api/resource-route";
import { idOrNotFound } from "@/lib/auth/access";

type Params = { teamId: string; inviteId: string };

/** Withdraws an open invitation: its link stops working. Whoever may invite may withdraw. */
export const DELETE = teamRoute<Params>("team:invite", async ({ params: { teamId, inviteId: rawInviteId }, user }) => {
  const inviteId = idOrNotFound(rawInviteId, "invite", "That invitation is no longer open.");
  await revokeInviteById({ teamId, inviteId, actorId: user.id });
  return new Response(null, { status: 204 });
});
