import { resendInviteById } from "@/db/queries/invites";
import { teamRoute } from "@/lib/api/resource-route";
import { idOrNotFound } from "@/lib/auth/access";
import { createToken } from "@/lib/auth/tokens";
import { inviteView } from "@/lib/teams/views";
import { deliverInvite, inviteExpiry } from "../../invite-mail";
import { enforceRateLimits, rateLimits } from "@/lib/auth/rate-limit";

type Params = { teamId: string; inviteId: string };

/** Sends an open invitation again, with a new link and a fresh expiry; the earlier link stops working. */
export const POST = teamRoute<Params>("team:invite", async ({ params: { teamId, inviteId: rawInviteId }, user, team }) => {
  await enforceRateLimits(
    [
      [rateLimits.invitesByUser, user.id],
      [rateLimits.invitesByTeam, teamId],
    ],
    "rate_limited:invite",
    "Too many invitations in a short time. Wait a while and try again.",
  );
  const inviteId = idOrNotFound(rawInviteId, "invite", "That invitation is no longer open.");
  const { token, tokenHash } = createToken();
  const invite = await resendInviteById({
    teamId,
    inviteId,
    actorId: user.id,
    tokenHash,
    expiresAt: inviteExpiry(),
    deliver: deliverInvite({ inviter: user, team, token }),
  });
  return Response.json({ invite: inviteView(invite) });
});
