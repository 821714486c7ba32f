"use client";

/**
 * The derivation screen: the notebook with its title, the shared document
 * (everyone on the page edits one Yjs document, with presence and the
 * connection's state), server evaluation and exports. Readers (viewers,
 * reviewers, anyone once a derivation is approved without the right to edit)
 * get the same screen read-only; the collaboration server drops their edits as
 * well. Everyone keeps their own view (equation form, equilibrium, code
 * language, and, without the right to edit, simulation settings) apart from
 * the document.
 */
import canonicalize from "canonicalize";
import clsx from "clsx";
import Link from "next/link";
import { useCallback, useEffect, useMemo, useRef, useState, type ReactNode } from "react";
import { ConnectionStatus } from "@/components/collab/connection-status";
import { PresenceAvatars } from "@/components/collab/presence";
import { SharedFieldsProvider, type SharedFields } from "@/components/collab/shared-context";
import type { ProviderFactory } from "@/components/collab/shared-session";
import { SharedInput } from "@/components/collab/shared-text-input";
import { useLeaveGuard } from "@/components/collab/use-leave-guard";
import { useSharedDocument } from "@/components/collab/use-shared-document";
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
import { DocumentError, parseStoredDocument, type DerivationDocument, type DocumentOperation } from "@/lib/notebook/document";
import { applySharedOperation, titleText } from "@/lib/notebook/document/shared-doc";
import { diagnosticLine } from "@/lib/notebook/results";
import { EMPTY_VIEW_PREFERENCES, personalCell, type ViewPreferences } from "@/lib/notebook/view-preferences";
import { CELL_SHORTCUTS } from "./cell-frame";
import { Notebook, type NotebookView } from "./notebook";
import { OwnSimulation } from "./own-simulation";
import { ServerJobStatus } from "./simulation/use-server-job";
import { UploadLimitsProvider, type UploadLimits } from "./upload-limits";
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
  /** The review area (lock banner, review panel), shown under the header; its steps wait for stored edits. */
  review?: ReactNode;
  /** Approved and locked: the review area's lock banner says so, in place of the read-only note. */
  locked?: boolean;
  /** Tests connect the shared document to an in-memory server instead of the collaboration server. */
  collabProvider?: ProviderFactory;
}

/** How long a step that reads the stored derivation (export, review) waits for the server to hold this page's document. */
const STORED_WAIT_MS = 6_000;

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
  // A change of the right to edit (a review step locked or unlocked the derivation) reconnects with a new ticket.
  const shared = useSharedDocument({ derivationId, initialDocument: props.initialDocument, createProvider: props.collabProvider, generation: canEdit });
  const doc = shared.document;
  const { session } = shared;
  const writable = canEdit && shared.editable;
  const [problem, setProblem] = useState<string | null>(null);
  const [exportOpen, setExportOpen] = useState(false);
  const [exportError, setExportError] = useState<string | null>(null);
  const [exporting, setExporting] = useState<"model" | "latex" | "notebook" | null>(null);
  const docRef = useRef(doc);
  useEffect(() => {
    docRef.current = doc;
  }, [doc]);

  const fields = useMemo<SharedFields | null>(
    () =>
      session && shared.synced && shared.user
        ? { ydoc: session.ydoc, origin: session.origin, awareness: session.awareness, undoManager: session.undoManager }
        : null,
    [session, shared.synced, shared.user],
  );

  /** Every structural edit (cells, rows, settings) goes to the shared document as one transaction of this person's. */
  const applyEdit = useCallback(
    (op: DocumentOperation) => {
      if (!session || !writable) return;
      try {
        applySharedOperation(session.ydoc, op, session.origin);
        setProblem(null);
      } catch (error) {
        if (error instanceof DocumentError) setProblem(error.message);
        else throw error;
      }
    },
    [session, writable],
  );

  // Undo and redo span every cell: the shared history of this person's edits. Editors handle the keys
  // themselves; elsewhere on the page (a table field, no focus) they are handled here.
  useEffect(() => {
    if (!session || !writable) return;
    function onKeyDown(event: KeyboardEvent) {
      if (!(event.ctrlKey || event.metaKey) || event.altKey) return;
      const key = event.key.toLowerCase();
      const redo = (key === "z" && event.shiftKey) || (key === "y" && !event.shiftKey);
      if (!(key === "z" && !event.shiftKey) && !redo) return;
      const target = event.target as HTMLElement | null;
      if (target?.closest(".cm-editor")) return;
      const field = target?.closest("input, textarea, select, [contenteditable=true]");
      if (field && !field.hasAttribute("data-shared-field")) return;
      if (target && target !== document.body && !target.closest("[data-testid=notebook-page]")) return;
      event.preventDefault();
      if (redo) session!.undoManager.redo();
      else session!.undoManager.undo();
    }
    window.addEventListener("keydown", onKeyDown);
    return () => window.removeEventListener("keydown", onKeyDown);
  }, [session, writable]);

  /**
   * Resolves true once the server holds this page's document: every edit stored, and the JSON copy
   * (which exports and review steps read) written. Gives up after a few seconds.
   */
  const whenServerCurrent = useCallback(async (): Promise<boolean> => {
    if (!session) return true;
    const deadline = Date.now() + STORED_WAIT_MS;
    if (!(await session.whenStored(STORED_WAIT_MS))) return false;
    while (Date.now() < deadline) {
      try {
        const { derivation } = await apiFetch<{ derivation: DerivationJson }>(`/api/derivations/${derivationId}`);
        const stored = parseStoredDocument(derivation.content, { title: derivation.title });
        if (stored.ok && canonicalize(stored.document) === canonicalize(docRef.current)) return true;
      } catch {
        // try again below
      }
      await new Promise((resolve) => setTimeout(resolve, 400));
    }
    return false;
  }, [session, derivationId]);

  useLeaveGuard({ pending: canEdit ? shared.pending : 0, whenStored: (ms) => session?.whenStored(ms) ?? Promise.resolve(true) });

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

  async function exportFile(format: "model" | "latex" | "notebook") {
    setExportError(null);
    setExporting(format);
    try {
      // Exports read the stored derivation: wait until it holds what this page shows.
      if (canEdit && !(await whenServerCurrent())) {
        throw new Error("The latest edits have not reached the server yet, so the export would miss them. Wait until the page says Saved, then export again.");
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
  useShortcut("e", "Evaluate the derivation now", evaluateNow);
  // Downloads leave the page: chords, so a stray key press cannot start one.
  useShortcut("Alt+Shift+X", "Export the model file (.model.json)", () => void exportFile("model"));
  useShortcut("Alt+Shift+L", "Export the equations as a LaTeX document", () => void exportFile("latex"));

  // Evaluation from inside an editor, where single keys type text. Ctrl+S is taken too: edits are stored
  // as they are typed, and the browser's own "save page" would only confuse.
  useEffect(() => {
    function onKeyDown(event: KeyboardEvent) {
      if (!(event.ctrlKey || event.metaKey) || event.altKey) return;
      if (event.key === "s" || event.key === "S") {
        event.preventDefault();
      } else if (event.key === "Enter") {
        event.preventDefault();
        evaluateNow();
      }
    }
    window.addEventListener("keydown", onKeyDown);
    return () => window.removeEventListener("keydown", onKeyDown);
  }, [evaluateNow]);

  const title = fields ? titleText(fields.ydoc) : null;

  const response = evaluation.response;

  return (
    <article className="space-y-4" data-testid="notebook-page" data-read-only={writable ? undefined : "true"}>
      <header className="space-y-2">
        <Link href={`/teams/${props.teamId}`} className="text-sm text-action hover:underline">
          ← {props.teamName}
        </Link>
        <div className="flex flex-wrap items-center gap-3">
          {canEdit && props.canRename && writable && title && fields ? (
            // The page's one heading holds the editable title, so the notebook still has an h1.
            <h1 className="min-w-0 flex-1">
              {/* The collaboration server's JSON copy carries the title to the dashboard's list. */}
              <SharedInput
                text={title}
                origin={fields.origin}
                aria-label="Derivation title"
                data-testid="derivation-title"
                className="w-full rounded border border-transparent bg-transparent px-1 text-2xl font-semibold hover:border-line focus:border-action focus:outline-none"
                maxLength={160}
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
          <ConnectionStatus connection={shared.connection} editor={canEdit} pending={shared.pending} synced={shared.synced} />
          <PresenceAvatars peers={shared.peers} />
          {canEdit ? null : (
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
            {evaluation.job ? (
              // A large model: a queue worker evaluates it; the results appear when it is done.
              <ServerJobStatus job={evaluation.job} what="Evaluation of this large model" onCancel={() => void evaluation.cancel().catch(() => undefined)} />
            ) : null}
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
        <ReviewSyncProvider canEdit={canEdit} whenStored={whenServerCurrent}>
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

      {problem || shared.problem ? (
        <p className="flex items-start gap-3 rounded border border-seal/60 bg-seal-soft px-3 py-2 text-sm text-ink" role="status" data-testid="shared-problem">
          <span className="flex-1">{problem ?? `The shared document could not be read: ${shared.problem}. The last readable version is shown.`}</span>
          {problem ? (
            <button type="button" className="text-muted hover:text-ink" aria-label="Dismiss" onClick={() => setProblem(null)}>
              ×
            </button>
          ) : null}
        </p>
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
        <SharedFieldsProvider value={fields}>
          {/* A study is queued from the content the server holds: its cell waits for the page's edits to be stored, like a review step. */}
          <ReviewSyncProvider canEdit={canEdit} whenStored={whenServerCurrent}>
            <Notebook
              document={doc}
              onChange={(_next, op) => applyEdit(op)}
              results={evaluation.results}
              stale={evaluation.stale}
              evaluating={evaluation.evaluating}
              diagnostics={evaluation.diagnostics}
              evaluatedModel={evaluation.evaluatedModel}
              readOnly={!writable}
              derivationId={derivationId}
              view={view}
              canStoreRuns={canStoreRuns}
            />
          </ReviewSyncProvider>
        </SharedFieldsProvider>
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
      <HelpEntry keys="Ctrl+Z / Ctrl+Shift+Z" description="Undo or redo your own edits, across every cell" enabled={canEdit} />
      <HelpEntry keys="Ctrl+Enter" description="Evaluate now, also while typing in an editor" />
      <CommentsSource cells={doc.cells} equations={evaluation.results?.equations} ydoc={shared.synced ? (session?.ydoc ?? null) : null} />
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
            ? "Results are from an earlier version of the document; they update when the edits settle."
            : `Evaluated${cached ? " (from cache)" : ""}${responseMs !== undefined ? ` in ${Math.round(responseMs)} ms` : ""}.`}
        </p>
      ) : null}
    </div>
  );
}
