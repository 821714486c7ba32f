"use client";

import { zodResolver } from "@hookform/resolvers/zod";
import { useMutation } from "@tanstack/react-query";
import { useRouter } from "next/navigation";
import { useForm } from "react-hook-form";
import { Button } from "@/components/ui/button";
import { Field } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { apiFetch } from "@/lib/api/fetcher";
import { createTeamSchema, type CreateTeamInput } from "@/lib/validation/teams";

export function CreateTeamForm() {
  const router = useRouter();
  const {
    register,
    handleSubmit,
    formState: { errors },
  } = useForm<CreateTeamInput>({ resolver: zodResolver(createTeamSchema), defaultValues: { name: "" } });
  const create = useMutation({
    mutationFn: (values: CreateTeamInput) => apiFetch<{ team: { id: string } }>("/api/teams", { method: "POST", body: values }),
    onSuccess: ({ team }) => {
      router.push(`/teams/${team.id}`);
      router.refresh();
    },
  });
  return (
    <form onSubmit={handleSubmit((values) => create.mutate(values))} noValidate className="space-y-3 rounded border border-line bg-surface p-4">
      {create.error ? <Notice tone="error">{create.error.message}</Notice> : null}
      <Field label="Team name" placeholder="e.g. Hoist dynamics group" error={errors.name?.message} {...register("name")} />
      <Button type="submit" variant="primary" disabled={create.isPending}>
        {create.isPending ? "Creating…" : "Create team"}
      </Button>
      <p className="text-xs text-muted">You become the team&apos;s lead.</p>
    </form>
  );
}
