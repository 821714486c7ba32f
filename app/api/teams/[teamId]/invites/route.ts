import { createInvite, getOpenInvitesByTeamId } from "@/db/queries/invites";
import { getMembersByTeamId } from "@/db/queries/teams";
import { teamRoute } from "@/lib/api/resource-route";
import { readJson } from "@/lib/api/route";
import { createToken } from "@/lib/auth/tokens";
import { AppError } from "@/lib/errors";
import { parseOrThrow } from "@/lib/validation/parse";
import { inviteView } from "@/lib/teams/views";
import { inviteMemberSchema } from "@/lib/validation/teams";
import { deliverInvite, inviteExpiry } from "./invite-mail";
import { enforceRateLimits, rateLimits } from "@/lib/auth/rate-limit";

type Params = { teamId: string };

export const GET = teamRoute<Params>("team:invite", async ({ params: { teamId } }) => {
  const invites = await getOpenInvitesByTeamId({ teamId });
  return Response.json({ invites: invites.map(inviteView) });
});

/**
 * Invites someone by e-mail; the link in the message lets them join with the
 * chosen role. Inviting an address again replaces its open invitation.
 */
export const POST = teamRoute<Params>("team:invite", async ({ request, params: { teamId }, user, team }) => {
  await enforceRateLimits(
    [
      [rateLimits.invitesByUser, user.id],
      [rateLimits.invitesByTeam, teamId],
    ],
    "rate_limited:invite",
    "Too many invitations in a short time. Wait a while and try again.",
  );
  const input = parseOrThrow(inviteMemberSchema, await readJson(request));
  const members = await getMembersByTeamId({ teamId });
  if (members.some((member) => member.email === input.email.toLowerCase())) {
    throw new AppError("conflict:invite", "That person is already a member.", {
      fieldErrors: { email: ["That person is already a member of this team."] },
    });
  }
  const { token, tokenHash } = createToken();
  const invite = await createInvite({
    teamId,
    email: input.email,
    role: input.role,
    tokenHash,
    invitedById: user.id,
    expiresAt: inviteExpiry(),
    deliver: deliverInvite({ inviter: user, team, token }),
  });
  return Response.json({ invite: inviteView(invite), replaced: invite.replaced }, { status: 201 });
});
