import { resendInviteById } from "@/db/queries/invites";
import { apiRoute } from "@/lib/api/route";
import { idOrNotFound, loadTeamFor } from "@/lib/auth/access";
import { requireUser } from "@/lib/auth/session";
import { createToken } from "@/lib/auth/tokens";
import { deliverInvite, inviteExpiry, inviteJson } from "../../invite-mail";

type Params = { teamId: string; inviteId: string };

/** Sends an open invitation again, with a new link and a fresh expiry; the earlier link stops working. */
export const POST = apiRoute<Params>(async (_request, { params }) => {
  const user = await requireUser();
  const { teamId, inviteId: rawInviteId } = await params;
  const { team } = await loadTeamFor(user, teamId, "team:invite");
  const inviteId = idOrNotFound(rawInviteId, "invite", "That invitation is no longer open.");
  const { token, tokenHash } = createToken();
  const invite = await resendInviteById({ teamId, inviteId, actorId: user.id, tokenHash, expiresAt: inviteExpiry(), deliver: deliverInvite({ inviter: user, team, token }) });
  return Response.json({ invite: inviteJson(invite) });
});
