"use client";

import { zodResolver } from "@hookform/resolvers/zod";
import { useRouter } from "next/navigation";
import { useState } from "react";
import { useForm } from "react-hook-form";
import { Button } from "@/components/ui/button";
import { Field } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { apiFetch } from "@/lib/api/fetcher";
import { AppError } from "@/lib/errors";
import { resetPasswordSchema, type ResetPasswordInput } from "@/lib/validation/auth";

export function ResetPasswordForm({ token }: { token: string }) {
  const router = useRouter();
  const [formError, setFormError] = useState<string | null>(null);
  const {
    register,
    handleSubmit,
    formState: { errors, isSubmitting },
  } = useForm<ResetPasswordInput>({ resolver: zodResolver(resetPasswordSchema), defaultValues: { token, password: "", confirmPassword: "" } });

  const onSubmit = handleSubmit(async (values) => {
    setFormError(null);
    try {
      await apiFetch("/api/auth/reset-password", { method: "POST", body: values });
      router.push("/sign-in?reset=1");
    } catch (error) {
      setFormError(error instanceof AppError ? error.message : "The password could not be changed.");
    }
  });

  return (
    <form method="post" onSubmit={onSubmit} noValidate className="space-y-4" aria-label="Choose a new password">
      {formError ? <Notice tone="error">{formError}</Notice> : null}
      <input type="hidden" {...register("token")} />
      <Field
        label="New password"
        type="password"
        autoComplete="new-password"
        autoFocus
        hint="At least 10 characters."
        error={errors.password?.message}
        {...register("password")}
      />
      <Field
        label="Repeat the new password"
        type="password"
        autoComplete="new-password"
        error={errors.confirmPassword?.message}
        {...register("confirmPassword")}
      />
      <Button type="submit" variant="primary" className="w-full" disabled={isSubmitting}>
        {isSubmitting ? "Saving…" : "Save new password"}
      </Button>
    </form>
  );
}
