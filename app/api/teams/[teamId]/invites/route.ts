import { createInvite, getOpenInvitesByTeamId } from "@/db/queries/invites";
import { getMembersByTeamId } from "@/db/queries/teams";
import { teamRoute } from "@/lib/api/resource-route";
import { readJson } from "@/lib/api/route";
import { createToken } from "@/lib/auth/tokens";
import { roleLabels } from "@/lib/domain";
import { env } from "@/lib/env";
import { AppError } from "@/lib/errors";
import { absoluteUrl } from "@/lib/links";
import { composeLinkMail, sendMail } from "@/lib/mailer";
import { parseOrThrow } from "@/lib/validation/parse";
import { inviteView } from "@/lib/teams/views";
import { inviteMemberSchema } from "@/lib/validation/teams";

type Params = { teamId: string };

export const GET = teamRoute<Params>("team:invite", async ({ params: { teamId } }) => {
  const invites = await getOpenInvitesByTeamId({ teamId });
  return Response.json({ invites: invites.map(inviteView) });
});

/** Invites someone by e-mail; the link in the message lets them join with the chosen role. */
export const POST = teamRoute<Params>("team:invite", async ({ request, params: { teamId }, user, team }) => {
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
    expiresAt: new Date(Date.now() + env.INVITE_TTL_HOURS * 3_600_000),
    deliver: (stored) =>
      sendMail(
        composeLinkMail({
          to: stored.email,
          subject: `${user.name} invited you to ${team.name} on Holonomy`,
          intro: `${user.name} invited you to join ${team.name} on Holonomy as ${roleLabels[stored.role].toLowerCase()}.`,
          linkLabel: "Accept the invitation",
          link: absoluteUrl(`/invite/${token}`),
          footnote: `The link works once and expires in ${env.INVITE_TTL_HOURS} hours.`,
        }),
      ),
  });
  return Response.json(
    { invite: { id: invite.id, email: invite.email, role: invite.role, expiresAt: invite.expiresAt } },
    { status: 201 },
  );
});
