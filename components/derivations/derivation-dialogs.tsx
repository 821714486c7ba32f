"use client";

import { zodResolver } from "@hookform/resolvers/zod";
import { useEffect } from "react";
import { useForm } from "react-hook-form";
import { z } from "zod";
import { Button } from "@/components/ui/button";
import { Dialog } from "@/components/ui/dialog";
import { Field } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { TRASH_RETENTION_DAYS } from "@/lib/domain";
import { AppError } from "@/lib/errors";
import { derivationTitleField } from "@/lib/validation/derivations";

const titleSchema = z.object({ title: derivationTitleField });
type TitleInput = z.infer<typeof titleSchema>;

export function DerivationTitleDialog({
  open,
  heading,
  submitLabel,
  initialTitle,
  pending,
  error,
  onSubmit,
  onClose,
}: {
  open: boolean;
  heading: string;
  submitLabel: string;
  initialTitle: string;
  pending: boolean;
  error: Error | null;
  onSubmit: (title: string) => void;
  onClose: () => void;
}) {
  const {
    register,
    handleSubmit,
    reset,
    setError,
    formState: { errors },
  } = useForm<TitleInput>({ resolver: zodResolver(titleSchema), defaultValues: { title: initialTitle } });

  useEffect(() => {
    if (open) reset({ title: initialTitle });
  }, [open, initialTitle, reset]);

  useEffect(() => {
    const message = error instanceof AppError ? error.fieldErrors?.title?.[0] : undefined;
    if (message) setError("title", { message });
  }, [error, setError]);

  return (
    <Dialog open={open} onClose={onClose} title={heading}>
      <form onSubmit={handleSubmit((values) => onSubmit(values.title))} noValidate className="space-y-4">
        {error && !(error instanceof AppError && error.fieldErrors?.title) ? <Notice tone="error">{error.message}</Notice> : null}
        <Field label="Title" autoFocus error={errors.title?.message} {...register("title")} />
        <div className="flex justify-end gap-2">
          <Button onClick={onClose}>Cancel</Button>
          <Button type="submit" variant="primary" disabled={pending}>
            {pending ? "Saving…" : submitLabel}
          </Button>
        </div>
      </form>
    </Dialog>
  );
}

export function DeleteDerivationDialog({
  derivation,
  pending,
  error,
  onConfirm,
  onClose,
}: {
  derivation: { title: string } | null;
  pending: boolean;
  error: Error | null;
  onConfirm: () => void;
  onClose: () => void;
}) {
  return (
    <Dialog open={derivation !== null} onClose={onClose} title="Delete derivation">
      <div className="space-y-4">
        {error ? <Notice tone="error">{error.message}</Notice> : null}
        <p className="text-sm">
          Delete <strong>{derivation?.title}</strong>? It moves to the team&apos;s trash with its runs and files; its owner or a lead can restore it there for{" "}
          {TRASH_RETENTION_DAYS} days, after which it is removed for good.
        </p>
        <div className="flex justify-end gap-2">
          <Button onClick={onClose}>Keep it</Button>
          <Button variant="danger" onClick={onConfirm} disabled={pending}>
            {pending ? "Moving to trash…" : "Move to trash"}
          </Button>
        </div>
      </div>
    </Dialog>
  );
}
