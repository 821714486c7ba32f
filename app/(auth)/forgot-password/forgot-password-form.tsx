"use client";

import { zodResolver } from "@hookform/resolvers/zod";
import Link from "next/link";
import { useState } from "react";
import { useForm } from "react-hook-form";
import { Button } from "@/components/ui/button";
import { Field } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { apiFetch } from "@/lib/api/fetcher";
import { AppError } from "@/lib/errors";
import { forgotPasswordSchema, type ForgotPasswordInput } from "@/lib/validation/auth";

export function ForgotPasswordForm() {
  const [sentMessage, setSentMessage] = useState<string | null>(null);
  const [formError, setFormError] = useState<string | null>(null);
  const {
    register,
    handleSubmit,
    formState: { errors, isSubmitting },
  } = useForm<ForgotPasswordInput>({ resolver: zodResolver(forgotPasswordSchema), defaultValues: { email: "" } });

  const onSubmit = handleSubmit(async (values) => {
    setFormError(null);
    try {
      const result = await apiFetch<{ message: string }>("/api/auth/forgot-password", { method: "POST", body: values });
      setSentMessage(result.message);
    } catch (error) {
      setFormError(error instanceof AppError ? error.message : "The request could not be sent.");
    }
  });

  return (
    <form method="post" onSubmit={onSubmit} noValidate className="space-y-4" aria-label="Reset your password">
      {sentMessage ? <Notice tone="info">{sentMessage}</Notice> : null}
      {formError ? <Notice tone="error">{formError}</Notice> : null}
      <Field label="E-mail" type="email" autoComplete="email" autoFocus error={errors.email?.message} {...register("email")} />
      <Button type="submit" variant="primary" className="w-full" disabled={isSubmitting}>
        {isSubmitting ? "Sending…" : "Send reset link"}
      </Button>
      <p className="text-sm">
        <Link href="/sign-in" className="text-action hover:underline">
          Back to sign-in
        </Link>
      </p>
    </form>
  );
}
