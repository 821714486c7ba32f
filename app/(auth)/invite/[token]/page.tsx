import type { Metadata } from "next";
import Link from "next/link";
import { buttonClass } from "@/components/ui/button";
import { SignOutButton } from "@/components/sign-out-button";
import { getInviteByTokenHash } from "@/db/queries/invites";
import { getSessionUser } from "@/lib/auth/session";
import { hashToken } from "@/lib/auth/tokens";
import { roleDescriptions, roleLabels } from "@/lib/domain";
import { AcceptInviteButton } from "./accept-invite-button";

export const metadata: Metadata = { title: "Invitation" };
export const dynamic = "force-dynamic";

export default async function InvitePage({ params }: { params: Promise<{ token: string }> }) {
  const { token } = await params;
  const invite = await getInviteByTokenHash({ tokenHash: hashToken(token) });

  if (!invite || invite.state !== "open") {
    const heading = !invite
      ? "This invitation link is not valid"
      : invite.state === "used"
        ? "This invitation has already been used"
        : "This invitation has expired";
    const detail = !invite
      ? "Check that you opened the whole link from the latest e-mail. A lead may have withdrawn the invitation, or sent a newer one that replaces this link."
      : invite.state === "used"
        ? "Each invitation works once. If you accepted it, sign in to reach the team."
        : "Invitations are valid for a limited time. Ask a lead of the team to send a new one.";
    return (
      <div data-testid="invite-unavailable">
        <h1 className="mb-2 text-xl font-semibold">{heading}</h1>
        <p className="mb-5 text-sm text-muted">{detail}</p>
        <Link href="/sign-in" className={buttonClass("secondary")}>
          Go to sign-in
        </Link>
      </div>
    );
  }

  const user = await getSessionUser();
  return (
    <>
      <p className="mb-1 text-xs font-medium uppercase tracking-wider text-muted">Invitation</p>
      <h1 className="mb-2 text-xl font-semibold">Join {invite.teamName}</h1>
      <p className="mb-1 text-sm">
        Role: <strong>{roleLabels[invite.role]}</strong> <span className="text-muted">— {roleDescriptions[invite.role]}</span>
      </p>
      <p className="mb-6 text-sm text-muted">Sent to {invite.email}.</p>
      {user ? (
        user.email === invite.email ? (
          <AcceptInviteButton token={token} />
        ) : (
          <div className="space-y-3 text-sm">
            <p>
              You are signed in as <strong>{user.email}</strong>. Sign out, then sign in or create an account with {invite.email}.
            </p>
            <SignOutButton />
          </div>
        )
      ) : (
        <div className="flex flex-wrap gap-3">
          <Link href={`/sign-up?invite=${encodeURIComponent(token)}`} className={buttonClass("primary")}>
            Create an account and join
          </Link>
          <Link
            href={`/sign-in?callbackUrl=${encodeURIComponent(`/invite/${token}`)}&email=${encodeURIComponent(invite.email)}`}
            className={buttonClass("secondary")}
          >
            I have an account
          </Link>
        </div>
      )}
    </>
  );
}
