import type { Metadata } from "next";
import Link from "next/link";
import { isPasswordResetTokenUsable } from "@/db/queries/password-resets";
import { hashToken } from "@/lib/auth/tokens";
import { ResetPasswordForm } from "./reset-password-form";

export const metadata: Metadata = { title: "Choose a new password" };
export const dynamic = "force-dynamic";

export default async function ResetPasswordPage({ params }: { params: Promise<{ token: string }> }) {
  const { token } = await params;
  const usable = await isPasswordResetTokenUsable({ tokenHash: hashToken(token) });
  if (!usable) {
    return (
      <>
        <h1 className="mb-2 text-xl font-semibold">This reset link no longer works</h1>
        <p className="mb-4 text-sm text-muted">Reset links work once and expire after an hour.</p>
        <Link href="/forgot-password" className="text-action hover:underline">
          Ask for a new link
        </Link>
      </>
    );
  }
  return (
    <>
      <h1 className="mb-6 text-xl font-semibold">Choose a new password</h1>
      <ResetPasswordForm token={token} />
    </>
  );
}
