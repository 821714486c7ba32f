"use client";

/**
 * The derivation screen: the notebook with its title, autosave, server
 * evaluation, exports and recovery of unsaved work. Readers (viewers,
 * reviewers, anyone once a derivation is approved without the right to edit)
 * get the same screen read-only; the server refuses their writes as well.
 * Everyone keeps their own view (equation form, equilibrium, code language,
 * and, without the right to edit, simulation settings) apart from the document.
 */
import { useQuery } from "@tanstack/react-query";
import clsx from "clsx";
import Link from "next/link";
import { useCallback, useEffect, useMemo, useRef, useState, type ReactNode } from "react";
import { CommentsSource } from "@/components/comments/comments-context";
import { CommentsButton, CommentsPanel } from "@/components/comments/comments-panel";
import { ReviewSyncProvider } from "@/components/review/review-sync";
import { useShortcut, useShortcutHelp } from "@/components/shortcuts";
import { Button } from "@/components/ui/button";
import { StatusBadge } from "@/components/ui/status-badge";
import { apiFetch } from "@/lib/api/fetcher";
import { safetyNote, type DerivationStatus } from "@/lib/domain";
import type { DerivationJson } from "@/lib/derivations/views";
import { AppError, appErrorFromBody } from "@/lib/errors";
import { applyOperation, documentToModel, parseStoredDocument, type DerivationDocument } from "@/lib/notebook/document";
import { diagnosticLine } from "@/lib/notebook/results";
import { EMPTY_VIEW_PREFERENCES, personalCell, type ViewPreferences } from "@/lib/notebook/view-preferences";
import { CELL_SHORTCUTS } from "./cell-frame";
import { Notebook, type NotebookView } from "./notebook";
import { OwnSimulation } from "./own-simulation";
import { UploadLimitsProvider, type UploadLimits } from "./upload-limits";
import { readDraft, removeDraft, useAutosave, type SaveFunction, type SaveStatus } from "./use-autosave";
import { useEvaluation } from "./use-evaluation";
import { useViewPreferences } from "./use-view-preferences";
import { useViewResults } from "./use-view-results";

export interface NotebookPageProps {
  derivationId: string;
  teamId: string;
  teamName: string;
  status: DerivationStatus;
  ownerName: string | null;
  roleLabel: string;
  canEdit: boolean;
  /**
   * Why a reader cannot edit: the derivation is approved and locked (their role could edit it
   * otherwise), or their role never edits. Ignored when `canEdit`.
   */
  readOnlyReason?: "approved" | "role";
  canRename: boolean;
  /** May store simulation runs on the server (reviewers may, viewers may not). */
  canSimulate?: boolean;
  initialDocument: DerivationDocument;
  /** This person's view of the derivation, as stored for them. */
  initialViewPreferences?: ViewPreferences;
  initialUpdatedAt: string;
  /** The server's upload limits, stated and applied where files are chosen. */
  uploadLimits?: UploadLimits;
  rowTitle: string;
  /** The review area (lock banner, review panel), shown under the header and kept in step with autosave. */
  review?: ReactNode;
  /** Approved and locked: the review area's lock banner says so, in place of the read-only note. */
  locked?: boolean;
}

interface DerivationRecord {
  derivation: DerivationJson;
}

const timeFormat = new Intl.DateTimeFormat("en-GB", { timeStyle: "short" });

function recoveryKey(id: string) {
  return `holonomy:recovery:${id}`;
}

function modelText(doc: DerivationDocument): string {
  try {
    return JSON.stringify(documentToModel(doc), null, 2);
  } catch {
    return JSON.stringify(doc, null, 2);
  }
}

/** Downloads a file from one of our GET routes, turning an error answer into an AppError. */
async function download(url: string): Promise<void> {
  let response: Response;
  try {
    response = await fetch(url, { credentials: "same-origin" });
  } catch (error) {
    throw new AppError("unavailable:api", "The server could not be reached. Check your connection.", { cause: error });
  }
  if (!response.ok) throw appErrorFromBody(await response.json().catch(() => null), response.status);
  const disposition = response.headers.get("content-disposition") ?? "";
  const filename = /filename\*?=(?:UTF-8'')?"?([^";]+)"?/i.exec(disposition)?.[1] ?? "derivation";
  const href = URL.createObjectURL(await response.blob());
  const link = document.createElement("a");
  link.href = href;
  link.download = decodeURIComponent(filename);
  document.body.appendChild(link);
  link.click();
  link.remove();
  setTimeout(() => URL.revokeObjectURL(href), 10_000);
}

export function NotebookPage(props: NotebookPageProps) {
  const { derivationId, canEdit } = props;
  const readOnlyReason = canEdit ? undefined : (props.readOnlyReason ?? "role");
  const [doc, setDoc] = useState(props.initialDocument);
  const [recovery, setRecovery] = useState<{ document: DerivationDocument; reason: string } | null>(null);
  const [notice, setNotice] = useState<string | null>(null);
  const [exportOpen, setExportOpen] = useState(false);
  const [exportError, setExportError] = useState<string | null>(null);
  const [exporting, setExporting] = useState<"model" | "latex" | "notebook" | null>(null);
  const rowTitle = useRef(props.rowTitle);
  const docRef = useRef(doc);
  useEffect(() => {
    docRef.current = doc;
  }, [doc]);

  const record = useQuery({
    queryKey: ["derivations", derivationId, "record"],
    queryFn: ({ signal }) => apiFetch<DerivationRecord>(`/api/derivations/${derivationId}`, { signal }),
    enabled: false,
  });

  const save = useCallback<SaveFunction>(
    async (document, baseUpdatedAt) => {
      let { updatedAt } = await apiFetch<{ updatedAt: string }>(`/api/derivations/${derivationId}/content`, {
        method: "PUT",
        body: { document, ...(baseUpdatedAt ? { baseUpdatedAt } : {}) },
      });
      // The dashboard lists the row's title; keep it in step with the document's.
      const title = document.title.trim();
      if (props.canRename && title && title !== rowTitle.current) {
        const renamed = await apiFetch<DerivationRecord>(`/api/derivations/${derivationId}`, { method: "PATCH", body: { title } });
        rowTitle.current = renamed.derivation.title;
        updatedAt = renamed.derivation.updatedAt;
      }
      return { updatedAt };
    },
    [derivationId, props.canRename],
  );

  const autosave = useAutosave({
    derivationId,
    document: doc,
    initialUpdatedAt: props.initialUpdatedAt,
    initialServerDocument: props.initialDocument,
    enabled: canEdit,
    save,
  });
  const evaluation = useEvaluation({ derivationId, document: doc });

  // This person's view: choices over the document's settings, and what they need from the server.
  const viewPreferences = useViewPreferences({ derivationId, initial: props.initialViewPreferences ?? EMPTY_VIEW_PREFERENCES });
  const { preferences, choose, changeSimulation } = viewPreferences;
  const personalCells = useMemo(() => doc.cells.map((cell) => personalCell(cell, preferences)), [doc.cells, preferences]);
  const viewResults = useViewResults({ derivationId, results: evaluation.results, resultsDocumentJson: evaluation.resultsDocumentJson, cells: personalCells });
  const view = useMemo<NotebookView>(
    () => ({ preferences, results: viewResults, choose, changeSimulation }),
    [preferences, viewResults, choose, changeSimulation],
  );
  const canStoreRuns = props.canSimulate ?? canEdit;
  const hasSimulationCell = doc.cells.some((cell) => cell.kind === "simulation");
  const [ownSimulationOpen, setOwnSimulationOpen] = useState(() => preferences.ownSimulation !== undefined);
  const ownSimulationRef = useRef<HTMLElement>(null);
  const [scrollToOwnSimulation, setScrollToOwnSimulation] = useState(false);
  useEffect(() => {
    if (!scrollToOwnSimulation) return;
    // A one-shot request: the panel exists only after the render that opened it.
    // eslint-disable-next-line react-hooks/set-state-in-effect -- resets the request once it is served
    setScrollToOwnSimulation(false);
    ownSimulationRef.current?.scrollIntoView({ behavior: "smooth", block: "start" });
    ownSimulationRef.current?.querySelector<HTMLElement>("input, button")?.focus({ preventScroll: true });
  }, [scrollToOwnSimulation]);

  // Work this browser kept from an earlier visit: resume it when it was based on the version
  // the server still holds, otherwise set it aside where it can be restored. localStorage
  // exists only in the browser, so this runs after mount (the page is a new one per derivation).
  const { initialDocument, initialUpdatedAt } = props;
  useEffect(() => {
    if (!canEdit) return;
    const storage = window.localStorage;
    const aside = storage.getItem(recoveryKey(derivationId));
    if (aside) {
      try {
        const entry = JSON.parse(aside) as { document: unknown; reason: string };
        // Set aside by an earlier version of the page, perhaps: migrated like stored content.
        const parsed = parseStoredDocument(entry.document);
        // eslint-disable-next-line react-hooks/set-state-in-effect -- state read from localStorage, an external system
        if (parsed.ok) setRecovery({ document: parsed.document, reason: String(entry.reason) });
      } catch {
        storage.removeItem(recoveryKey(derivationId));
      }
    }
    const draft = readDraft(storage, derivationId);
    if (!draft || JSON.stringify(draft.document) === JSON.stringify(initialDocument)) return;
    if (draft.baseUpdatedAt === initialUpdatedAt) {
      setDoc(draft.document);
      setNotice("Restored changes from this browser that had not reached the server yet; saving them now.");
    } else {
      const entry = { document: draft.document, reason: "This browser kept changes made to an older version of this derivation, which has changed since." };
      setRecovery(entry);
      try {
        storage.setItem(recoveryKey(derivationId), JSON.stringify(entry));
      } catch {
        // still shown on the page
      }
      removeDraft(storage, derivationId);
    }
  }, [canEdit, derivationId, initialDocument, initialUpdatedAt]);

  function keepAside(document: DerivationDocument, reason: string) {
    const entry = { document, reason };
    setRecovery(entry);
    try {
      window.localStorage.setItem(recoveryKey(derivationId), JSON.stringify(entry));
    } catch {
      // still shown on the page
    }
  }

  function dismissRecovery() {
    setRecovery(null);
    window.localStorage.removeItem(recoveryKey(derivationId));
  }

  async function loadServerVersion() {
    const { data, error } = await record.refetch();
    if (error || !data) return setNotice(`Could not load the saved version: ${error?.message ?? "no answer"}. Your copy is unchanged.`);
    const parsed = parseStoredDocument(data.derivation.content, { title: data.derivation.title });
    if (!parsed.ok) return setNotice("The saved version could not be read as a notebook. Your copy is unchanged.");
    keepAside(docRef.current, "Your copy, set aside when you loaded the version someone else saved.");
    autosave.reset(parsed.document, data.derivation.updatedAt);
    rowTitle.current = data.derivation.title;
    setDoc(parsed.document);
    setNotice(null);
  }

  async function overwriteServerVersion() {
    const { data, error } = await record.refetch();
    if (error || !data) return setNotice(`Could not reach the server: ${error?.message ?? "no answer"}. Your copy is unchanged.`);
    rowTitle.current = data.derivation.title;
    await autosave.overwrite(data.derivation.updatedAt);
  }

  async function exportFile(format: "model" | "latex" | "notebook") {
    setExportError(null);
    setExporting(format);
    try {
      // Exports read the stored derivation: bring it up to date first.
      if (canEdit && autosave.status.state !== "saved" && !(await autosave.saveNow())) {
        throw new Error("The latest changes are not saved yet, so the export would miss them. Save, then export again.");
      }
      await download(format === "notebook" ? `/api/derivations/${derivationId}/export/notebook` : `/api/derivations/${derivationId}/export?format=${format}`);
      setExportOpen(false);
    } catch (error) {
      setExportError(error instanceof Error ? error.message : "The export failed.");
    } finally {
      setExporting(null);
    }
  }

  const { evaluateNow } = evaluation;
  const { saveNow } = autosave;
  useShortcut("e", "Evaluate the derivation now", evaluateNow);
  useShortcut("s", "Save now", () => void saveNow(), canEdit);
  // Downloads leave the page: chords, so a stray key press cannot start one.
  useShortcut("Alt+Shift+X", "Export the model file (.model.json)", () => void exportFile("model"));
  useShortcut("Alt+Shift+L", "Export the equations as a LaTeX document", () => void exportFile("latex"));

  // The same two actions from inside an editor, where single keys type text.
  useEffect(() => {
    function onKeyDown(event: KeyboardEvent) {
      if (!(event.ctrlKey || event.metaKey) || event.altKey) return;
      if (event.key === "s" || event.key === "S") {
        event.preventDefault();
        void saveNow();
      } else if (event.key === "Enter") {
        event.preventDefault();
        evaluateNow();
      }
    }
    window.addEventListener("keydown", onKeyDown);
    return () => window.removeEventListener("keydown", onKeyDown);
  }, [saveNow, evaluateNow]);

  const response = evaluation.response;

  return (
    <article className="space-y-4" data-testid="notebook-page" data-read-only={canEdit ? undefined : "true"}>
      <header className="space-y-2">
        <Link href={`/teams/${props.teamId}`} className="text-sm text-action hover:underline">
          ← {props.teamName}
        </Link>
        <div className="flex flex-wrap items-center gap-3">
          {canEdit && props.canRename ? (
            // The page's one heading holds the editable title, so the notebook still has an h1.
            <h1 className="min-w-0 flex-1">
              <input
                aria-label="Derivation title"
                data-testid="derivation-title"
                className="w-full rounded border border-transparent bg-transparent px-1 text-2xl font-semibold hover:border-line focus:border-action focus:outline-none"
                value={doc.title}
                maxLength={160}
                onChange={(event) => setDoc((current) => applyOperation(current, { type: "setTitle", title: event.target.value }))}
              />
            </h1>
          ) : (
            <h1 className="min-w-0 flex-1 text-2xl font-semibold" data-testid="derivation-title">
              {doc.title}
            </h1>
          )}
          <StatusBadge status={props.status} />
        </div>
        <div className="flex flex-wrap items-center gap-x-4 gap-y-2 text-sm">
          <span className="text-muted">
            Owner {props.ownerName ?? "—"} · you are {props.roleLabel.toLowerCase()}
          </span>
          {canEdit ? (
            <SaveIndicator status={autosave.status} onRetry={() => void saveNow()} />
          ) : (
            <span
              className={clsx(
                "rounded border px-2 py-0.5 text-xs",
                readOnlyReason === "approved" ? "border-seal/60 bg-seal-soft text-seal" : "border-line bg-sunken text-muted",
              )}
              data-testid="read-only-badge"
              data-reason={readOnlyReason}
            >
              {readOnlyReason === "approved" ? "Read-only: approved and locked" : `Read-only for ${props.roleLabel.toLowerCase()}s`}
            </span>
          )}
          <div className="ml-auto flex flex-wrap items-center gap-2" role="toolbar" aria-label="Derivation actions">
            <CommentsButton />
            <Button variant="primary" size="sm" onClick={evaluateNow} disabled={evaluation.evaluating} title="Evaluate (e, or Ctrl+Enter in an editor)">
              {evaluation.evaluating ? <Spinner /> : null}
              {evaluation.evaluating ? "Evaluating…" : "Evaluate"}
            </Button>
            {!hasSimulationCell ? (
              <Button
                size="sm"
                title="Simulate this derivation with your own settings; the document is not changed"
                onClick={() => {
                  setOwnSimulationOpen(true);
                  setScrollToOwnSimulation(true);
                }}
              >
                Simulate
              </Button>
            ) : null}
            {canEdit ? (
              <Button
                size="sm"
                onClick={() => void saveNow()}
                title="Save now (s, or Ctrl+S)"
                disabled={autosave.status.state === "saved" || autosave.status.state === "conflict"}
              >
                Save now
              </Button>
            ) : null}
            <div className="relative">
              <Button size="sm" aria-expanded={exportOpen} aria-haspopup="true" onClick={() => setExportOpen((open) => !open)}>
                Export ▾
              </Button>
              {exportOpen ? (
                <div
                  className="absolute right-0 z-30 mt-1 w-80 space-y-2 rounded border border-line bg-surface p-3 text-sm shadow-lg"
                  role="group"
                  aria-label="Export"
                  onKeyDown={(event) => event.key === "Escape" && setExportOpen(false)}
                >
                  <Button size="sm" className="w-full justify-start" onClick={() => void exportFile("model")} disabled={exporting !== null} title="Alt+Shift+X">
                    {exporting === "model" ? "Preparing…" : "Model file (.model.json)"}
                  </Button>
                  <Button size="sm" className="w-full justify-start" onClick={() => void exportFile("latex")} disabled={exporting !== null} title="Alt+Shift+L">
                    {exporting === "latex" ? "Preparing…" : "LaTeX document (.tex)"}
                  </Button>
                  <Button
                    size="sm"
                    className="w-full justify-start"
                    onClick={() => void exportFile("notebook")}
                    disabled={exporting !== null}
                    title="The whole notebook with its stored runs and files; import it from a team dashboard"
                  >
                    {exporting === "notebook" ? "Preparing…" : "Notebook archive (.notebook.zip)"}
                  </Button>
                  {exportError ? (
                    <p className="text-danger" role="alert">
                      {exportError}
                    </p>
                  ) : null}
                  <p className="border-l-2 border-seal pl-2 text-xs text-muted" role="note" data-testid="export-safety-note">
                    {safetyNote}
                  </p>
                </div>
              ) : null}
            </div>
          </div>
        </div>
      </header>

      {props.review ? (
        <ReviewSyncProvider derivationId={derivationId} canEdit={canEdit} autosave={autosave} document={doc}>
          {props.review}
        </ReviewSyncProvider>
      ) : null}

      {!canEdit && !props.locked ? (
        readOnlyReason === "approved" ? (
          <p className="rounded border border-seal/60 bg-seal-soft px-3 py-2 text-sm text-ink" data-testid="read-only-note" data-reason="approved">
            <strong className="font-semibold text-seal">Approved and locked.</strong> This derivation was approved, so it is frozen: a lead of the team can
            unlock it, giving a reason. You can still read, evaluate and export it, choose how you view it and simulate it with your own settings.
          </p>
        ) : (
          <p className="rounded border border-line bg-surface px-3 py-2 text-sm text-muted" data-testid="read-only-note" data-reason="role">
            <strong className="font-semibold text-ink">Read-only for your role.</strong> As {props.roleLabel.toLowerCase()} you can read, evaluate and export
            this derivation, choose how you view it and simulate it with your own settings{props.canSimulate ? " (and store your runs for the team)" : ""};
            editing it is for the team&apos;s analysts and leads.
          </p>
        )
      ) : null}

      {notice ? (
        <p className="flex items-start gap-3 rounded border border-line bg-surface px-3 py-2 text-sm" role="status">
          <span className="flex-1">{notice}</span>
          <button type="button" className="text-muted hover:text-ink" aria-label="Dismiss" onClick={() => setNotice(null)}>
            ×
          </button>
        </p>
      ) : null}

      {autosave.status.state === "conflict" ? (
        <div className="space-y-2 rounded border border-danger/60 bg-danger-soft px-3 py-2 text-sm" role="alert" data-testid="save-conflict">
          <p>
            <strong className="text-danger">Not saved: someone else saved this derivation since you loaded it.</strong> Your copy stays here and in this browser
            until you choose.
          </p>
          <div className="flex flex-wrap gap-2">
            <Button size="sm" onClick={() => void loadServerVersion()}>
              Load their version (keep mine aside)
            </Button>
            <Button size="sm" variant="danger" onClick={() => void overwriteServerVersion()}>
              Save mine over theirs
            </Button>
          </div>
        </div>
      ) : null}

      {recovery ? (
        <section className="space-y-2 rounded border border-seal/60 bg-seal-soft px-3 py-2 text-sm" aria-label="Recovered copy" data-testid="recovery-panel">
          <p>{recovery.reason}</p>
          <details>
            <summary className="cursor-pointer text-action">Show that copy as a model file</summary>
            <pre className="mt-2 max-h-64 overflow-auto rounded bg-surface p-2 font-mono text-xs">{modelText(recovery.document)}</pre>
          </details>
          <div className="flex flex-wrap gap-2">
            {canEdit ? (
              <Button
                size="sm"
                onClick={() => {
                  setDoc(recovery.document);
                  dismissRecovery();
                }}
              >
                Restore that copy
              </Button>
            ) : null}
            <Button size="sm" onClick={() => void navigator.clipboard?.writeText(modelText(recovery.document))}>
              Copy
            </Button>
            <Button size="sm" variant="ghost" onClick={dismissRecovery}>
              Discard
            </Button>
          </div>
        </section>
      ) : null}

      <EvaluationBar evaluation={evaluation} document={doc} responseMs={response?.requestMs} cached={response?.cached} />
      {viewPreferences.saveError || viewResults.error ? (
        <p className="text-sm text-danger" role="alert" data-testid="view-error">
          {viewResults.error
            ? `Your view choice could not be shown: ${viewResults.error}`
            : `Your view choices apply on this page but could not be stored: ${viewPreferences.saveError}`}
        </p>
      ) : null}

      <UploadLimitsProvider limits={props.uploadLimits}>
        <Notebook
          document={doc}
          onChange={(next) => setDoc(next)}
          results={evaluation.results}
          stale={evaluation.stale}
          evaluating={evaluation.evaluating}
          diagnostics={evaluation.diagnostics}
          evaluatedModel={evaluation.evaluatedModel}
          readOnly={!canEdit}
          derivationId={derivationId}
          view={view}
          canStoreRuns={canStoreRuns}
        />
        {!hasSimulationCell && ownSimulationOpen ? (
          <OwnSimulation
            ref={ownSimulationRef}
            document={doc}
            results={evaluation.results}
            derivationId={derivationId}
            settings={preferences.ownSimulation}
            canStoreRuns={canStoreRuns}
            onSettingsChange={(patch) => changeSimulation(null, patch)}
            onClose={() => setOwnSimulationOpen(false)}
          />
        ) : null}
      </UploadLimitsProvider>
      {CELL_SHORTCUTS.map((shortcut) => (
        <HelpEntry key={shortcut.keys} keys={shortcut.keys} description={`${shortcut.description} (focus in the cell)`} />
      ))}
      <HelpEntry keys="Ctrl+S" description="Save now, also while typing in an editor" enabled={canEdit} />
      <HelpEntry keys="Ctrl+Enter" description="Evaluate now, also while typing in an editor" />
      <CommentsSource cells={doc.cells} equations={evaluation.results?.equations} />
      <CommentsPanel />
    </article>
  );
}

/** Lists a key handled elsewhere (by the cells or a key listener) in the help dialog. */
function HelpEntry({ keys, description, enabled = true }: { keys: string; description: string; enabled?: boolean }) {
  useShortcutHelp(keys, description, enabled);
  return null;
}

function Spinner() {
  return <span aria-hidden className="inline-block h-3 w-3 animate-spin rounded-full border-2 border-current border-r-transparent" />;
}

function SaveIndicator({ status, onRetry }: { status: SaveStatus; onRetry: () => void }) {
  const [now, setNow] = useState(() => Date.now());
  useEffect(() => {
    if (status.state !== "retrying") return;
    const timer = setInterval(() => setNow(Date.now()), 1000);
    return () => clearInterval(timer);
  }, [status.state]);

  let text: string;
  let tone = "text-muted";
  switch (status.state) {
    case "saved":
      text = status.savedAt ? `Saved ${timeFormat.format(new Date(status.savedAt))}` : "Saved";
      break;
    case "unsaved":
      text = "Unsaved changes";
      break;
    case "saving":
      text = "Saving…";
      break;
    case "retrying":
      text = `Save failed (${status.message}). Retrying in ${Math.max(0, Math.ceil((status.retryAt - now) / 1000))} s — your changes are kept in this browser.`;
      tone = "text-danger";
      break;
    case "refused":
      text = `Not saved: ${status.message} Your changes are kept in this browser.`;
      tone = "text-danger";
      break;
    case "conflict":
      text = "Not saved: conflict";
      tone = "text-danger";
      break;
  }
  return (
    <span className={clsx("flex items-center gap-2", tone)} role="status" aria-live="polite" data-testid="save-status" data-state={status.state}>
      {status.state === "saving" ? (
        <Spinner />
      ) : (
        <span
          aria-hidden
          className={clsx("inline-block h-2 w-2 rounded-full", status.state === "saved" ? "bg-action" : status.state === "unsaved" ? "bg-seal" : "bg-danger")}
        />
      )}
      {text}
      {status.state === "retrying" || status.state === "refused" ? (
        <button type="button" className="text-action underline" onClick={onRetry}>
          Retry now
        </button>
      ) : null}
    </span>
  );
}

function EvaluationBar({
  evaluation,
  document,
  responseMs,
  cached,
}: {
  evaluation: ReturnType<typeof useEvaluation>;
  document: DerivationDocument;
  responseMs?: number;
  cached?: boolean;
}) {
  const { error, evaluating, stale, results, diagnostics } = evaluation;
  return (
    <div
      className="space-y-1 text-sm"
      data-testid="evaluation-status"
      data-state={evaluating ? "evaluating" : error ? "failed" : stale ? "stale" : results ? "current" : "none"}
    >
      {evaluating ? (
        <div className="h-0.5 overflow-hidden rounded bg-sunken" role="progressbar" aria-label="Evaluating">
          <div className="h-full w-full animate-pulse bg-action" />
        </div>
      ) : null}
      {error ? (
        <div className="rounded border border-danger/60 bg-danger-soft px-3 py-2" role="alert" data-testid="evaluation-errors">
          <p className="font-medium text-danger">
            Evaluation failed{results ? "; the results below are from the last good evaluation and are marked stale" : ""}.
          </p>
          <ul className="list-disc pl-5">
            {diagnostics.length > 0 ? diagnostics.map((d, i) => <li key={i}>{diagnosticLine(document, d)}</li>) : [<li key="message">{error.message}</li>]}
          </ul>
        </div>
      ) : results && !evaluating ? (
        <p className="text-xs text-muted">
          {stale
            ? "Results are from an earlier version; they update when your edits settle."
            : `Evaluated${cached ? " (from cache)" : ""}${responseMs !== undefined ? ` in ${Math.round(responseMs)} ms` : ""}.`}
        </p>
      ) : null}
    </div>
  );
}
