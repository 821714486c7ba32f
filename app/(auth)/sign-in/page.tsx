import type { Metadata } from "next";
import { redirect } from "next/navigation";
import { getSessionUser } from "@/lib/auth/session";
import { safeReturnPath } from "@/lib/links";
import { SignInForm } from "./sign-in-form";

export const metadata: Metadata = { title: "Sign in" };
export const dynamic = "force-dynamic";

export default async function SignInPage({
  searchParams,
}: {
  searchParams: Promise<{ callbackUrl?: string; reset?: string; email?: string; notice?: string }>;
}) {
  const params = await searchParams;
  const returnTo = safeReturnPath(params.callbackUrl);
  if (await getSessionUser()) redirect(returnTo);
  return (
    <>
      <h1 className="mb-1 text-xl font-semibold">Sign in</h1>
      <p className="mb-6 text-sm text-muted">Derive, check and share equations of motion with your team.</p>
      <SignInForm returnTo={returnTo} passwordWasReset={params.reset === "1"} afterSignUp={params.notice === "sign-up"} initialEmail={params.email ?? ""} />
    </>
  );
}
