import type { Metadata } from "next";
import Link from "next/link";
import { getInviteByTokenHash } from "@/db/queries/invites";
import { hashToken } from "@/lib/auth/tokens";
import { roleLabels } from "@/lib/domain";
import { SignUpForm } from "./sign-up-form";

export const metadata: Metadata = { title: "Create an account" };
export const dynamic = "force-dynamic";

export default async function SignUpPage({ searchParams }: { searchParams: Promise<{ invite?: string }> }) {
  const { invite: inviteToken } = await searchParams;
  const invite = inviteToken ? await getInviteByTokenHash({ tokenHash: hashToken(inviteToken) }) : null;
  const openInvite = invite?.state === "open" ? invite : null;
  return (
    <>
      <h1 className="mb-1 text-xl font-semibold">Create an account</h1>
      <p className="mb-6 text-sm text-muted">
        {openInvite
          ? `You will join ${openInvite.teamName} as ${roleLabels[openInvite.role].toLowerCase()}.`
          : "Start a team, or join one when a lead invites you."}
      </p>
      <SignUpForm inviteToken={openInvite ? inviteToken : undefined} invitedEmail={openInvite?.email} />
      <p className="mt-4 text-sm text-muted">
        Already have an account?{" "}
        <Link href={openInvite ? `/sign-in?callbackUrl=${encodeURIComponent(`/invite/${inviteToken}`)}` : "/sign-in"} className="text-action hover:underline">
          Sign in
        </Link>
      </p>
    </>
  );
}
