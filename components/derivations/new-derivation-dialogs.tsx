"use client";

import { useEffect, useRef, useState } from "react";
import { MAX_MODEL_FILE_LENGTH } from "@/app/api/teams/[teamId]/derivations/import/schema";
import { Button } from "@/components/ui/button";
import { Dialog } from "@/components/ui/dialog";
import { FileInput, fileTooLarge } from "@/components/ui/file-input";
import { inputClass } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { AppError, appErrorFromBody } from "@/lib/errors";
import { MAX_CHAIN_LINKS, MIN_CHAIN_LINKS, TEMPLATES, type TemplateId } from "@/lib/notebook/templates";

export interface NewDerivationInput {
  title: string;
  template: TemplateId | "blank";
  links?: number;
}

const BLANK = { id: "blank" as const, title: "Blank", description: "An empty notebook: coordinates, parameters, energies and the equations cell, to fill in." };

/** New derivation: a title and a starting point (blank or one of the templates; the chain asks for N). */
export function NewDerivationDialog({
  open,
  pending,
  error,
  onSubmit,
  onClose,
}: {
  open: boolean;
  pending: boolean;
  error: Error | null;
  onSubmit: (input: NewDerivationInput) => void;
  onClose: () => void;
}) {
  const [title, setTitle] = useState("");
  const [template, setTemplate] = useState<TemplateId | "blank">("blank");
  const [links, setLinks] = useState(3);
  const [titleTouched, setTitleTouched] = useState(false);
  const [problem, setProblem] = useState<string | null>(null);

  useEffect(() => {
    if (!open) return;
    setTitle("");
    setTemplate("blank");
    setLinks(3);
    setTitleTouched(false);
    setProblem(null);
  }, [open]);

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
    <Dialog open={open} onClose={onClose} title="New derivation">
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
          onSubmit({ title: trimmed, template, ...(template === "n-link-chain" ? { links } : {}) });
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
            <label key={option.id} className="flex cursor-pointer items-start gap-2 rounded border border-line px-2.5 py-1.5 text-sm has-[:checked]:border-action has-[:checked]:bg-action-soft">
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
          <Button onClick={onClose}>Cancel</Button>
          <Button type="submit" variant="primary" disabled={pending}>
            {pending ? "Creating…" : "Create"}
          </Button>
        </div>
      </form>
    </Dialog>
  );
}

/**
 * Import a .model.json: the server validates the whole file before it creates
 * anything, so a refused file leaves no half-made derivation; its field and
 * reason are shown here.
 */
export function ImportDerivationDialog({ open, teamId, onImported, onClose }: { open: boolean; teamId: string; onImported: (id: string) => void; onClose: () => void }) {
  const fileRef = useRef<HTMLInputElement>(null);
  const [pending, setPending] = useState(false);
  const [error, setError] = useState<AppError | null>(null);

  useEffect(() => {
    if (open) {
      setError(null);
      setPending(false);
    }
  }, [open]);

  async function submit() {
    const file = fileRef.current?.files?.[0];
    if (!file) return setError(new AppError("bad_request:validation", "Choose a .model.json file.", { fieldErrors: { file: ["Choose a .model.json file."] } }));
    const refusal = fileTooLarge(file, MAX_MODEL_FILE_LENGTH);
    if (refusal) return setError(new AppError("too_large:model", refusal));
    setPending(true);
    setError(null);
    try {
      const body = new FormData();
      body.set("file", file);
      const response = await fetch(`/api/teams/${teamId}/derivations/import`, { method: "POST", body, credentials: "same-origin" });
      const json = (await response.json().catch(() => null)) as { derivation?: { id: string } } | null;
      if (!response.ok || !json?.derivation) throw appErrorFromBody(json, response.status);
      onImported(json.derivation.id);
    } catch (caught) {
      setError(caught instanceof AppError ? caught : new AppError("unavailable:api", "The server could not be reached. Check your connection."));
    } finally {
      setPending(false);
    }
  }

  const fieldLines = error?.fieldErrors ? Object.entries(error.fieldErrors).flatMap(([field, reasons]) => (reasons ?? []).map((reason) => `${field}: ${reason}`)) : [];

  return (
    <Dialog open={open} onClose={onClose} title="Import a model file">
      <form
        className="space-y-4"
        onSubmit={(event) => {
          event.preventDefault();
          void submit();
        }}
      >
        <p className="text-sm text-muted">A <span className="font-mono">.model.json</span> file becomes a new derivation in this team. A file with a problem is refused as a whole, with every problem listed.</p>
        <FileInput
          ref={fileRef}
          label="Model file"
          name="file"
          accept=".json,application/json"
          maxBytes={MAX_MODEL_FILE_LENGTH}
          hint="A .model.json file"
          onFile={() => setError(null)}
          onRefused={(message) => setError(new AppError("too_large:model", message))}
        />
        {error ? (
          <div className="rounded border border-danger/60 bg-danger-soft px-3 py-2 text-sm" role="alert" data-testid="import-error">
            <p className="font-medium text-danger">Not imported. {error.message}</p>
            {fieldLines.length > 0 && !(fieldLines.length === 1 && error.message.includes(fieldLines[0]!.split(": ").slice(1).join(": "))) ? (
              <ul className="list-disc pl-5 font-mono text-xs">
                {fieldLines.map((line) => (
                  <li key={line}>{line}</li>
                ))}
              </ul>
            ) : null}
          </div>
        ) : null}
        <div className="flex justify-end gap-2">
          <Button onClick={onClose}>Cancel</Button>
          <Button type="submit" variant="primary" disabled={pending}>
            {pending ? "Importing…" : "Import"}
          </Button>
        </div>
      </form>
    </Dialog>
  );
}
