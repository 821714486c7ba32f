"use client";

import { zodResolver } from "@hookform/resolvers/zod";
import { signIn } from "next-auth/react";
import { useRouter } from "next/navigation";
import { useState } from "react";
import { useForm } from "react-hook-form";
import { Button } from "@/components/ui/button";
import { Field } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { apiFetch } from "@/lib/api/fetcher";
import { AppError } from "@/lib/errors";
import { signUpSchema, type SignUpInput } from "@/lib/validation/auth";

interface AcceptedInvite {
  teamId: string;
}

export function SignUpForm({ inviteToken, invitedEmail }: { inviteToken?: string; invitedEmail?: string }) {
  const router = useRouter();
  const [formError, setFormError] = useState<string | null>(null);
  const {
    register,
    handleSubmit,
    setError,
    formState: { errors, isSubmitting },
  } = useForm<SignUpInput>({
    resolver: zodResolver(signUpSchema),
    defaultValues: { name: "", email: invitedEmail ?? "", password: "", inviteToken },
  });

  const onSubmit = handleSubmit(async (values) => {
    setFormError(null);
    try {
      // The answer is the same whether or not the e-mail already has an account (nothing to read from it).
      await apiFetch("/api/auth/sign-up", { method: "POST", body: values });
      const signedIn = await signIn("credentials", { email: values.email, password: values.password, redirect: false });
      if (!signedIn || signedIn.error) {
        router.push(`/sign-in?email=${encodeURIComponent(values.email)}&notice=sign-up`);
        return;
      }
      let teamId: string | null = null;
      if (values.inviteToken) {
        try {
          teamId = (await apiFetch<AcceptedInvite>(`/api/invites/${encodeURIComponent(values.inviteToken)}/accept`, { method: "POST" })).teamId;
        } catch (error) {
          setFormError(error instanceof AppError ? error.message : "The invitation could not be accepted.");
        }
      }
      router.replace(teamId ? `/teams/${teamId}` : "/teams");
      router.refresh();
    } catch (error) {
      if (error instanceof AppError && error.fieldErrors) {
        for (const [field, fieldMessages] of Object.entries(error.fieldErrors)) {
          if (field in values) setError(field as keyof SignUpInput, { message: fieldMessages[0] });
        }
      }
      setFormError(error instanceof AppError ? error.message : "The account could not be created.");
    }
  });

  return (
    <form method="post" onSubmit={onSubmit} noValidate className="space-y-4" aria-label="Create an account">
      {formError ? <Notice tone="error">{formError}</Notice> : null}
      <Field label="Name" autoComplete="name" autoFocus error={errors.name?.message} {...register("name")} />
      <Field
        label="E-mail"
        type="email"
        autoComplete="email"
        readOnly={Boolean(invitedEmail)}
        hint={invitedEmail ? "The invitation was sent to this address." : undefined}
        error={errors.email?.message}
        {...register("email")}
      />
      <Field
        label="Password"
        type="password"
        autoComplete="new-password"
        hint="At least 10 characters."
        error={errors.password?.message}
        {...register("password")}
      />
      <input type="hidden" {...register("inviteToken")} />
      <Button type="submit" variant="primary" className="w-full" disabled={isSubmitting}>
        {isSubmitting ? "Creating account…" : inviteToken ? "Create account and join" : "Create account"}
      </Button>
    </form>
  );
}
