"use client";

import { useMutation } from "@tanstack/react-query";
import { useRef, useState } from "react";
import { MAX_MODEL_FILE_LENGTH } from "@/app/api/teams/[teamId]/derivations/import/schema";
import { Button } from "@/components/ui/button";
import { Dialog } from "@/components/ui/dialog";
import { FileInput, fileTooLarge, formatBytes } from "@/components/ui/file-input";
import { inputClass } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { apiFetch } from "@/lib/api/fetcher";
import { AppError } from "@/lib/errors";
import { MAX_CHAIN_LINKS, MIN_CHAIN_LINKS, TEMPLATES, type TemplateId } from "@/lib/notebook/templates";
import { useIdempotencyKey } from "./use-idempotency-key";

/** The server's default archive limit (NOTEBOOK_ARCHIVE_MAX_BYTES); the server checks the configured one. */
const NOTEBOOK_ARCHIVE_UPLOAD_LIMIT = 50 * 1024 * 1024;

export interface NewDerivationInput {
  title: string;
  template: TemplateId | "blank";
  links?: number;
}

const BLANK = { id: "blank" as const, title: "Blank", description: "An empty notebook: coordinates, parameters, energies and the equations cell, to fill in." };

type Created = { derivation: { id: string } };

/**
 * A create request that runs once however often it is sent: the button is
 * disabled from the first click until the answer (a guard also stops a second
 * submit in the same tick), and the request carries an Idempotency-Key, so a
 * retry or a double submit that still reaches the server gets the first
 * derivation back instead of a second one.
 */
function useCreateOnce<Input>(
  send: (input: Input, key: string) => Promise<Created>,
  { identity, onCreated }: { identity: (input: Input) => string; onCreated: (id: string) => void },
) {
  const { keyFor, reset } = useIdempotencyKey();
  const inFlight = useRef(false);
  const [submitting, setSubmitting] = useState(false);
  const mutation = useMutation({
    mutationFn: (input: Input) => send(input, keyFor(identity(input))),
    onSuccess: ({ derivation }) => {
      reset();
      onCreated(derivation.id);
    },
    onSettled: () => {
      inFlight.current = false;
      setSubmitting(false);
    },
  });
  const { reset: resetMutation } = mutation;
  return {
    pending: submitting || mutation.isPending,
    error: mutation.error,
    submit(input: Input) {
      if (inFlight.current) return;
      inFlight.current = true;
      setSubmitting(true);
      mutation.mutate(input);
    },
    clear: resetMutation,
  };
}

/** New derivation: a title and a starting point (blank or one of the templates; the chain asks for N). */
export function NewDerivationDialog({
  open,
  teamId,
  onCreated,
  onClose,
}: {
  open: boolean;
  teamId: string;
  onCreated: (id: string) => void;
  onClose: () => void;
}) {
  const { pending, error, submit, clear } = useCreateOnce(
    (input: NewDerivationInput, key: string) =>
      apiFetch<Created>(`/api/teams/${teamId}/derivations`, { method: "POST", body: input, headers: { "Idempotency-Key": key } }),
    { identity: (input) => JSON.stringify(input), onCreated },
  );
  // The request (and its Idempotency-Key, for a retry after a lost answer) outlives an opening; its
  // error does not. The fields live in the form, which the dialog mounts afresh on every opening.
  const close = () => {
    clear();
    onClose();
  };
  return (
    <Dialog open={open} onClose={close} title="New derivation">
      <NewDerivationForm pending={pending} error={error} submit={submit} onCancel={close} />
    </Dialog>
  );
}

function NewDerivationForm({
  pending,
  error,
  submit,
  onCancel,
}: {
  pending: boolean;
  error: Error | null;
  submit: (input: NewDerivationInput) => void;
  onCancel: () => void;
}) {
  const [title, setTitle] = useState("");
  const [template, setTemplate] = useState<TemplateId | "blank">("blank");
  const [links, setLinks] = useState(3);
  const [titleTouched, setTitleTouched] = useState(false);
  const [problem, setProblem] = useState<string | null>(null);

  const chosen = template === "blank" ? BLANK : (TEMPLATES.find((t) => t.id === template) ?? BLANK);
  const fieldError = error instanceof AppError ? (error.fieldErrors?.title?.[0] ?? error.fieldErrors?.links?.[0]) : undefined;

  function defaultTitle(id: TemplateId | "blank", n: number): string {
    if (id === "blank") return "";
    if (id === "n-link-chain") return `${n}-link chain`;
    return TEMPLATES.find((t) => t.id === id)?.title ?? "";
  }

  function choose(id: TemplateId | "blank") {
    setTemplate(id);
    if (!titleTouched) setTitle(defaultTitle(id, links));
  }

  return (
    <form
      noValidate
      className="space-y-4"
      onSubmit={(event) => {
        event.preventDefault();
        const trimmed = title.trim();
        if (!trimmed) return setProblem("Give the derivation a title.");
        if (template === "n-link-chain" && !(Number.isInteger(links) && links >= MIN_CHAIN_LINKS && links <= MAX_CHAIN_LINKS)) {
          return setProblem(`Choose between ${MIN_CHAIN_LINKS} and ${MAX_CHAIN_LINKS} links.`);
        }
        setProblem(null);
        submit({ title: trimmed, template, ...(template === "n-link-chain" ? { links } : {}) });
      }}
    >
      {error && !fieldError ? <Notice tone="error">{error.message}</Notice> : null}
      <label className="block text-sm">
        <span className="mb-1 block font-medium">Title</span>
        <input
          autoFocus
          className={`${inputClass} w-full`}
          value={title}
          maxLength={160}
          onChange={(event) => {
            setTitle(event.target.value);
            setTitleTouched(true);
          }}
          aria-invalid={Boolean(problem ?? fieldError) || undefined}
        />
      </label>
      {(problem ?? fieldError) ? (
        <p className="text-sm text-danger" role="alert">
          {problem ?? fieldError}
        </p>
      ) : null}
      <fieldset className="space-y-1.5">
        <legend className="mb-1 text-sm font-medium">Start from</legend>
        {[BLANK, ...TEMPLATES].map((option) => (
          <label
            key={option.id}
            className="flex cursor-pointer items-start gap-2 rounded border border-line px-2.5 py-1.5 text-sm has-[:checked]:border-action has-[:checked]:bg-action-soft"
          >
            <input type="radio" name="template" className="mt-1" value={option.id} checked={template === option.id} onChange={() => choose(option.id)} />
            <span>
              <span className="font-medium">{option.title}</span>
              <span className="block text-xs text-muted">{option.description}</span>
            </span>
          </label>
        ))}
      </fieldset>
      {chosen.id === "n-link-chain" ? (
        <label className="flex items-center gap-2 text-sm">
          <span className="font-medium">Number of links N</span>
          <input
            type="number"
            min={MIN_CHAIN_LINKS}
            max={MAX_CHAIN_LINKS}
            step={1}
            className={`${inputClass} w-20`}
            value={Number.isFinite(links) ? links : ""}
            onChange={(event) => {
              const n = event.target.valueAsNumber;
              setLinks(n);
              if (!titleTouched && Number.isInteger(n)) setTitle(defaultTitle("n-link-chain", n));
            }}
          />
          <span className="text-xs text-muted">
            {MIN_CHAIN_LINKS}–{MAX_CHAIN_LINKS}
          </span>
        </label>
      ) : null}
      <div className="flex justify-end gap-2">
        <Button onClick={onCancel}>Cancel</Button>
        <Button type="submit" variant="primary" disabled={pending}>
          {pending ? "Creating…" : "Create"}
        </Button>
      </div>
    </form>
  );
}

/** A notebook archive by its name, or by the zip signature ("PK\x03\x04") when the name says nothing. */
async function isNotebookArchive(file: File): Promise<boolean> {
  if (/\.zip$/i.test(file.name)) return true;
  if (/\.json$/i.test(file.name)) return false;
  const head = new Uint8Array(await file.slice(0, 4).arrayBuffer());
  return head[0] === 0x50 && head[1] === 0x4b && head[2] === 0x03 && head[3] === 0x04;
}

/**
 * Import a .model.json (the model only) or a .notebook.zip (the whole
 * notebook with its runs and files): the server checks the whole file before
 * it creates anything, so a refused file leaves no half-made derivation; every
 * problem is listed here with its field or archive entry.
 */
export function ImportDerivationDialog({
  open,
  teamId,
  onImported,
  onClose,
}: {
  open: boolean;
  teamId: string;
  onImported: (id: string) => void;
  onClose: () => void;
}) {
  const {
    pending,
    error: failure,
    submit,
    clear,
  } = useCreateOnce(
    async (file: File, key: string) => {
      const body = new FormData();
      body.set("file", file);
      const path = (await isNotebookArchive(file)) ? "import/notebook" : "import";
      return apiFetch<Created>(`/api/teams/${teamId}/derivations/${path}`, { method: "POST", body, headers: { "Idempotency-Key": key } });
    },
    { identity: (file) => `${file.name}\u0000${file.size}\u0000${file.lastModified}`, onCreated: onImported },
  );
  // As for a new derivation: the form (file and refusal) is mounted afresh on every opening.
  const close = () => {
    clear();
    onClose();
  };
  return (
    <Dialog open={open} onClose={close} title="Import a model file or notebook archive">
      <ImportForm pending={pending} failure={failure} submit={submit} clear={clear} onCancel={close} />
    </Dialog>
  );
}

function ImportForm({
  pending,
  failure,
  submit,
  clear,
  onCancel,
}: {
  pending: boolean;
  failure: Error | null;
  submit: (file: File) => void;
  clear: () => void;
  onCancel: () => void;
}) {
  const fileRef = useRef<HTMLInputElement>(null);
  const [missing, setMissing] = useState<AppError | null>(null);
  const error = missing ?? (failure instanceof AppError ? failure : failure ? new AppError("unavailable:api", failure.message) : null);

  function start() {
    const file = fileRef.current?.files?.[0];
    if (!file)
      return setMissing(
        new AppError("bad_request:validation", "Choose a .model.json or .notebook.zip file.", {
          fieldErrors: { file: ["Choose a .model.json or .notebook.zip file."] },
        }),
      );
    setMissing(null);
    submit(file);
  }

  const fieldLines = error?.fieldErrors
    ? Object.entries(error.fieldErrors).flatMap(([field, reasons]) => (reasons ?? []).map((reason) => `${field}: ${reason}`))
    : [];

  return (
    <form
      className="space-y-4"
      onSubmit={(event) => {
        event.preventDefault();
        start();
      }}
    >
      <p className="text-sm text-muted">
        A <span className="font-mono">.model.json</span> file (the model) or a <span className="font-mono">.notebook.zip</span> archive (the whole notebook with
        its stored runs and files) becomes a new derivation in this team. A file with a problem is refused as a whole, with every field or entry and the reason.
      </p>
      <FileInput
        ref={fileRef}
        label="Model file or notebook archive"
        name="file"
        accept=".json,application/json,.zip,application/zip"
        maxBytes={NOTEBOOK_ARCHIVE_UPLOAD_LIMIT}
        hint={`A .model.json file up to ${formatBytes(MAX_MODEL_FILE_LENGTH)}, or a .notebook.zip archive`}
        onFile={(file) => {
          clear();
          // A model file has a smaller limit than an archive: refuse it here, and clear it, so nothing is sent.
          const refusal = file && !file.name.endsWith(".zip") ? fileTooLarge(file, MAX_MODEL_FILE_LENGTH) : null;
          if (refusal && fileRef.current) fileRef.current.value = "";
          setMissing(refusal ? new AppError("too_large:model", refusal) : null);
        }}
        onRefused={(message) => setMissing(new AppError("too_large:model", message))}
      />
      {error ? (
        <div className="rounded border border-danger/60 bg-danger-soft px-3 py-2 text-sm" role="alert" data-testid="import-error">
          <p className="font-medium text-danger">Not imported. {error.message}</p>
          {fieldLines.length > 0 && !(fieldLines.length === 1 && error.message.includes(fieldLines[0]!.split(": ").slice(1).join(": "))) ? (
            <ul className="max-h-60 list-disc overflow-y-auto pl-5 font-mono text-xs">
              {fieldLines.map((line) => (
                <li key={line}>{line}</li>
              ))}
            </ul>
          ) : null}
        </div>
      ) : null}
      <div className="flex justify-end gap-2">
        <Button onClick={onCancel}>Cancel</Button>
        <Button type="submit" variant="primary" disabled={pending}>
          {pending ? "Importing…" : "Import"}
        </Button>
      </div>
    </form>
  );
}
