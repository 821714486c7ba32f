import "server-only";
import type { Invite, Team } from "@/db/schema";
import type { SessionUser } from "@/lib/auth/session";
import { roleLabels } from "@/lib/domain";
import { env } from "@/lib/env";
import { absoluteUrl } from "@/lib/links";
import { composeLinkMail, sendMail } from "@/lib/mailer";

/** When a new or re-sent invitation link expires. */
export function inviteExpiry(): Date {
  return new Date(Date.now() + env.INVITE_TTL_HOURS * 3_600_000);
}

/** Sends the invitation e-mail with its one-time link (used for new and re-sent invitations). */
export function deliverInvite({ inviter, team, token }: { inviter: SessionUser; team: Pick<Team, "name">; token: string }) {
  return (stored: Invite) =>
    sendMail(
      composeLinkMail({
        to: stored.email,
        subject: `${inviter.name} invited you to ${team.name} on Holonomy`,
        intro: `${inviter.name} invited you to join ${team.name} on Holonomy as ${roleLabels[stored.role].toLowerCase()}.`,
        linkLabel: "Accept the invitation",
        link: absoluteUrl(`/invite/${token}`),
        footnote: `The link works once and expires in ${env.INVITE_TTL_HOURS} hours. A newer invitation to this address replaces it.`,
      }),
    );
}
