"use client";

import { zodResolver } from "@hookform/resolvers/zod";
import Link from "next/link";
import { signIn } from "next-auth/react";
import { useRouter } from "next/navigation";
import { useState } from "react";
import { useForm } from "react-hook-form";
import { Button } from "@/components/ui/button";
import { Field } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { signInSchema, type SignInInput } from "@/lib/validation/auth";

const messages: Record<string, string> = {
  CredentialsSignin: "That e-mail and password do not match an account.",
  RateLimited: "Too many failed attempts for this e-mail. Wait 15 minutes, or reset your password.",
  Unavailable: "Sign-in is unavailable because the database cannot be reached. Try again shortly.",
};

export function SignInForm({
  returnTo,
  passwordWasReset,
  afterSignUp = false,
  initialEmail,
}: {
  returnTo: string;
  passwordWasReset: boolean;
  /** Signing in right after a sign-up did not work: the address may already have an account, which was sent an e-mail. */
  afterSignUp?: boolean;
  initialEmail: string;
}) {
  const router = useRouter();
  const [formError, setFormError] = useState<string | null>(null);
  const {
    register,
    handleSubmit,
    formState: { errors, isSubmitting },
  } = useForm<SignInInput>({ resolver: zodResolver(signInSchema), defaultValues: { email: initialEmail, password: "" } });

  const onSubmit = handleSubmit(async (values) => {
    setFormError(null);
    const result = await signIn("credentials", { ...values, redirect: false });
    if (!result || result.error) {
      setFormError(messages[result?.error ?? ""] ?? messages.CredentialsSignin ?? null);
      return;
    }
    router.replace(returnTo);
    router.refresh();
  });

  return (
    <form method="post" onSubmit={onSubmit} noValidate className="space-y-4" aria-label="Sign in">
      {passwordWasReset ? <Notice tone="info">Your password was changed. Sign in with the new one.</Notice> : null}
      {afterSignUp ? (
        <Notice tone="info">We sent a message to that address. If it already has an account, sign in with its password or reset the password.</Notice>
      ) : null}
      {formError ? <Notice tone="error">{formError}</Notice> : null}
      <Field label="E-mail" type="email" autoComplete="email" autoFocus error={errors.email?.message} {...register("email")} />
      <Field label="Password" type="password" autoComplete="current-password" error={errors.password?.message} {...register("password")} />
      <Button type="submit" variant="primary" className="w-full" disabled={isSubmitting}>
        {isSubmitting ? "Signing in…" : "Sign in"}
      </Button>
      <div className="flex justify-between text-sm">
        <Link href="/forgot-password" className="text-action hover:underline">
          Forgot your password?
        </Link>
        <Link href="/sign-up" className="text-action hover:underline">
          Create an account
        </Link>
      </div>
    </form>
  );
}
