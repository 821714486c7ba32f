import { createInvite, getOpenInvitesByTeamId } from "@/db/queries/invites";
import { getMembersByTeamId } from "@/db/queries/teams";
import { apiRoute, readJson } from "@/lib/api/route";
import { loadTeamFor } from "@/lib/auth/access";
import { requireUser } from "@/lib/auth/session";
import { createToken } from "@/lib/auth/tokens";
import { AppError } from "@/lib/errors";
import { parseOrThrow } from "@/lib/validation/parse";
import { inviteMemberSchema } from "@/lib/validation/teams";
import { deliverInvite, inviteExpiry, inviteJson } from "./invite-mail";

type Params = { teamId: string };

export const GET = apiRoute<Params>(async (_request, { params }) => {
  const user = await requireUser();
  const teamId = (await params).teamId;
  await loadTeamFor(user, teamId, "team:invite");
  const invites = await getOpenInvitesByTeamId({ teamId });
  return Response.json({ invites: invites.map(inviteJson) });
});

/**
 * Invites someone by e-mail; the link in the message lets them join with the
 * chosen role. Inviting an address again replaces its open invitation.
 */
export const POST = apiRoute<Params>(async (request, { params }) => {
  const user = await requireUser();
  const teamId = (await params).teamId;
  const { team } = await loadTeamFor(user, teamId, "team:invite");
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
  return Response.json({ invite: inviteJson(invite), replaced: invite.replaced }, { status: 201 });
});
