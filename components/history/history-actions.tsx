"use client";

/** The history page's two writes: naming a checkpoint, and restoring a revision (as a new one). */
import { useMutation } from "@tanstack/react-query";
import { useRouter } from "next/navigation";
import { useId, useState, type FormEvent } from "react";
import { Button } from "@/components/ui/button";
import { Dialog } from "@/components/ui/dialog";
import { inputClass } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { apiFetch } from "@/lib/api/fetcher";
import { AppError } from "@/lib/errors";
import { checkpointSchema } from "@/lib/validation/review";

export function CheckpointForm({ derivationId }: { derivationId: string }) {
  const router = useRouter();
  const id = useId();
  const [name, setName] = useState("");
  const [error, setError] = useState<string | null>(null);
  const [done, setDone] = useState<string | null>(null);
  const naming = useMutation({
    mutationFn: (checkpoint: { name: string }) =>
      apiFetch<{ revision: { number: number } }>(`/api/derivations/${derivationId}/revisions`, { method: "POST", body: checkpoint }),
    onSuccess: ({ revision }, checkpoint) => {
      setDone(`Checkpoint "${checkpoint.name}" is revision ${revision.number}.`);
      setName("");
      router.refresh();
    },
    onError: (caught) => setError(caught instanceof AppError ? (caught.fieldErrors?.name?.[0] ?? caught.message) : "The checkpoint could not be named."),
  });
  const pending = naming.isPending;

  function submit(event: FormEvent) {
    event.preventDefault();
    const parsed = checkpointSchema.safeParse({ name });
    if (!parsed.success) return setError(parsed.error.issues[0]?.message ?? "Name the checkpoint.");
    setError(null);
    naming.mutate(parsed.data);
  }

  return (
    <form onSubmit={submit} noValidate className="space-y-1" aria-label="Name a checkpoint" data-testid="checkpoint-form">
      <label htmlFor={id} className="block text-sm font-medium">
        Name the current content as a checkpoint
      </label>
      <div className="flex flex-wrap gap-2">
        <input
          id={id}
          value={name}
          maxLength={120}
          placeholder="e.g. Before adding rope stiffness"
          onChange={(event) => setName(event.target.value)}
          aria-invalid={error ? true : undefined}
          aria-describedby={error ? `${id}-error` : undefined}
          className={`${inputClass} min-w-0 flex-1 basis-56`}
        />
        <Button type="submit" disabled={pending}>
          {pending ? "Naming…" : "Name checkpoint"}
        </Button>
      </div>
      {error ? (
        <p id={`${id}-error`} role="alert" className="text-xs font-medium text-danger">
          {error}
        </p>
      ) : done ? (
        <p role="status" className="text-xs text-muted">
          {done}
        </p>
      ) : null}
    </form>
  );
}

export function RestoreButton({ derivationId, revision }: { derivationId: string; revision: { id: string; number: number } }) {
  const router = useRouter();
  const [open, setOpen] = useState(false);
  const restoring = useMutation({
    mutationFn: () => apiFetch(`/api/derivations/${derivationId}/revisions/${revision.id}/restore`, { method: "POST" }),
    onSuccess: () => {
      setOpen(false);
      router.refresh();
    },
  });
  const pending = restoring.isPending;
  const error = restoring.error ? restoring.error.message || "The restore failed." : null;

  return (
    <>
      <Button
        size="sm"
        variant="ghost"
        onClick={() => {
          restoring.reset();
          setOpen(true);
        }}
      >
        Restore
      </Button>
      <Dialog open={open} onClose={() => setOpen(false)} title={`Restore revision ${revision.number}`}>
        <div className="space-y-4">
          {error ? <Notice tone="error">{error}</Notice> : null}
          <p className="text-sm">
            The notebook gets the content of revision {revision.number} again. Nothing is rewritten: the current content is kept as a revision first, and the
            restored content becomes a new revision. Anyone editing the notebook in another window is asked which version to keep.
          </p>
          <div className="flex justify-end gap-2">
            <Button onClick={() => setOpen(false)}>Cancel</Button>
            <Button variant="primary" onClick={() => restoring.mutate()} disabled={pending} autoFocus>
              {pending ? "Restoring…" : `Restore revision ${revision.number}`}
            </Button>
          </div>
        </div>
      </Dialog>
    </>
  );
}
