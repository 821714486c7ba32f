"use client";

/**
 * The study cell: a model run across parameter values and operating cases on
 * the server's queue workers. Its settings live in the document; running
 * queues the study of the cell as the server holds it, shows progress (runs
 * done and failed, time left) with Cancel and the results so far, and keeps
 * the cell's earlier studies. Any run of a study opens as an ordinary server
 * run, stored for the team.
 */
import clsx from "clsx";
import { useMutation, useQueryClient } from "@tanstack/react-query";
import { lazy, Suspense, useEffect, useMemo, useState } from "react";
import { useReviewSync } from "@/components/review/review-sync";
import { apiFetch } from "@/lib/api/fetcher";
import { AppError } from "@/lib/errors";
import type { DerivationDocument, DocumentOperation } from "@/lib/notebook/document";
import type { RunJson } from "@/lib/runs/views";
import { displayOfStoredRun, type RunDisplay } from "../simulation/run-view";
import { ServerJobStatus, useServerJob } from "../simulation/use-server-job";
import { formatTimeLeft } from "./format";
import { STUDY_RUN_LIMIT, studyRunCount } from "./run-count";
import type { StudySettings } from "./settings-types";
import { StudyResults } from "./study-results";
import { StudySettingsForm } from "./study-settings-form";
import { studyEnded, type StudyListItem, type StudyView } from "./types";
import { STUDY_POLL_MS, studiesKey, studyPath, useCancelStudy, useStartStudy, useStudy, useStudyList } from "./use-study";

const ResultsView = lazy(() => import("../simulation/results-view"));

export interface StudyCellViewProps {
  cell: { id: string; settings: StudySettings };
  document: DerivationDocument;
  /** Present when the derivation is stored; studies run only then. */
  derivationId?: string;
  readOnly?: boolean;
  /** May run and cancel studies (the permission of a server run; false while the derivation is locked). */
  canRun?: boolean;
  onOperation: (op: DocumentOperation) => void;
  /** How often a running study is read again (tests shorten it). */
  pollMs?: number;
}

/** Field errors of a study refused for its settings (a 400), one message per field. */
function fieldMessages(error: unknown): Record<string, string> | null {
  if (!(error instanceof AppError) || !error.fieldErrors || !error.code.startsWith("bad_request:")) return null;
  const out: Record<string, string> = {};
  for (const [key, messages] of Object.entries(error.fieldErrors)) out[key] = messages.join(" ");
  return Object.keys(out).length > 0 ? out : null;
}

const STATE_LABELS: Record<StudyView["state"], string> = {
  queued: "Queued",
  running: "Running",
  completed: "Completed",
  cancelled: "Cancelled",
  failed: "Failed",
};

export function StudyCellView({
  cell,
  document: doc,
  derivationId,
  readOnly = false,
  canRun = !readOnly,
  onOperation,
  pollMs = STUDY_POLL_MS,
}: StudyCellViewProps) {
  const settings = cell.settings;
  return (
    <div className="flex min-w-0 flex-col gap-3" data-testid="study-cell">
      {derivationId ? (
        <StoredStudy cell={cell} document={doc} derivationId={derivationId} readOnly={readOnly} canRun={canRun} onOperation={onOperation} pollMs={pollMs} />
      ) : (
        <>
          <StudySettingsForm cellId={cell.id} settings={settings} document={doc} readOnly={readOnly} onOperation={onOperation} />
          <p className="text-sm text-muted">Studies run on the server once the derivation is saved.</p>
        </>
      )}
    </div>
  );
}

function StoredStudy({
  cell,
  document: doc,
  derivationId,
  readOnly,
  canRun,
  onOperation,
  pollMs,
}: Required<Omit<StudyCellViewProps, "derivationId">> & { derivationId: string }) {
  const queryClient = useQueryClient();
  const sync = useReviewSync();
  const [fieldErrors, setFieldErrors] = useState<Record<string, string>>({});
  const [problem, setProblem] = useState<string | null>(null);
  const [chosenId, setChosenId] = useState<string | null>(null);
  const list = useStudyList(derivationId, cell.id);
  const studies = list.data?.studies ?? [];
  // The study on show: the one chosen (or just started), else the newest.
  const activeId = chosenId ?? studies[0]?.id ?? null;
  const active = useStudy(derivationId, activeId, pollMs);
  const study = active.data?.study ?? null;
  const start = useStartStudy(derivationId, cell.id);
  const cancel = useCancelStudy(derivationId, cell.id);
  const count = studyRunCount(cell.settings);
  const running = study !== null && !studyEnded(study.state);

  // When the study on show ends, the list's entry changes with it.
  const activeState = study?.state;
  useEffect(() => {
    if (activeState && studyEnded(activeState)) void queryClient.invalidateQueries({ queryKey: studiesKey(derivationId, cell.id) });
  }, [activeState, derivationId, cell.id, queryClient]);

  async function run() {
    setProblem(null);
    // The server reads the cell from the content it holds: the latest edits must be stored first.
    const ready = await sync.prepare();
    if (!ready.ok) return setProblem(ready.message);
    start.mutate(undefined, {
      onSuccess: ({ study: started }) => {
        setFieldErrors({});
        setChosenId(started.id);
      },
      onError: (error) => {
        const fields = fieldMessages(error);
        setFieldErrors(fields ?? {});
        setProblem(
          fields ? "Correct the highlighted settings to run the study." : error instanceof AppError ? error.message : "The study could not be started.",
        );
      },
    });
  }

  const opener = useOpenRun(derivationId);
  const coordinateUnits = useMemo(() => {
    const units: Record<string, string> = {};
    for (const c of doc.cells) if (c.kind === "coordinates") for (const row of c.rows) if (row.name.trim()) units[row.name.trim()] = row.unit.trim();
    return units;
  }, [doc]);

  return (
    <>
      <StudySettingsForm cellId={cell.id} settings={cell.settings} document={doc} readOnly={readOnly} errors={fieldErrors} onOperation={onOperation} />
      <div className="flex flex-wrap items-center gap-2">
        {canRun ? (
          <button
            type="button"
            className="rounded bg-action px-3 py-1 text-sm text-action-ink hover:bg-action-strong disabled:opacity-50"
            disabled={start.isPending || running || (count.total !== null && count.total > STUDY_RUN_LIMIT)}
            onClick={() => void run()}
            data-testid="study-run"
          >
            {start.isPending
              ? "Queueing…"
              : count.total !== null
                ? `Run study (${count.total.toLocaleString("en-GB")} ${count.total === 1 ? "run" : "runs"})`
                : "Run study"}
          </button>
        ) : (
          <p className="text-sm text-muted" data-testid="study-cannot-run">
            Running studies is not open to you here (your role, or the derivation is approved and locked). Earlier studies stay readable.
          </p>
        )}
        {study && running && <StudyProgress study={study} canCancel={canRun} cancelling={cancel.isPending} onCancel={() => cancel.mutate(study.id)} />}
      </div>
      {problem && (
        <p className="text-sm text-danger" role="alert" data-testid="study-problem">
          {problem}
        </p>
      )}
      {cancel.error && (
        <p className="text-sm text-danger" role="alert">
          {cancel.error instanceof AppError ? cancel.error.message : "The study could not be cancelled."}
        </p>
      )}
      {list.error && (
        <p className="text-sm text-danger" role="alert">
          The earlier studies could not be read{list.error instanceof AppError ? `: ${list.error.message}` : "."}
        </p>
      )}
      {studies.length > 0 && <EarlierStudies studies={studies} activeId={activeId} onChoose={setChosenId} />}
      {study && <StudySummary study={study} />}
      {study && (
        <StudyResults
          derivationId={derivationId}
          study={study}
          onOpenRun={canRun ? (index) => opener.open(study.id, index) : undefined}
          opening={opener.opening}
        />
      )}
      {opener.job && <ServerJobStatus job={opener.job} what="Run" onCancel={opener.cancel} />}
      {opener.problem && (
        <p className="text-sm text-danger" role="alert">
          {opener.problem}
        </p>
      )}
      {opener.run && (
        <section className="flex min-w-0 flex-col gap-2 border-t border-line pt-3" aria-label="Opened run" data-testid="study-opened-run">
          <Suspense fallback={<p className="text-sm text-muted">Loading charts…</p>}>
            <ResultsView run={opener.run} units={coordinateUnits} />
          </Suspense>
        </section>
      )}
    </>
  );
}

function StudyProgress({ study, canCancel, cancelling, onCancel }: { study: StudyView; canCancel: boolean; cancelling: boolean; onCancel: () => void }) {
  const { total, done, failed, etaSeconds } = study.progress;
  const ended = done + failed;
  const left = formatTimeLeft(etaSeconds);
  return (
    <span className="flex flex-wrap items-center gap-2" data-testid="study-progress">
      <progress className="h-2 w-40 max-w-full accent-[var(--action)]" max={Math.max(1, total)} value={ended} aria-label="Study progress" />
      <span className="text-xs text-muted tabular-nums" role="status">
        {study.state === "queued" ? "Queued" : "Running"}: {done.toLocaleString("en-GB")} of {total.toLocaleString("en-GB")} runs done
        {failed > 0 && <span className="text-danger">, {failed.toLocaleString("en-GB")} failed</span>}
        {left && ` · ${left}`}
      </span>
      {canCancel && (
        <button
          type="button"
          className="rounded border border-line px-2 py-0.5 text-sm hover:border-danger hover:text-danger disabled:opacity-50"
          disabled={cancelling}
          onClick={onCancel}
        >
          Cancel study
        </button>
      )}
    </span>
  );
}

function StudySummary({ study }: { study: StudyView }) {
  const { total, done, failed } = study.progress;
  return (
    <div className="flex flex-col gap-1 text-sm" data-testid="study-summary">
      <p>
        <span className={clsx("font-medium", study.state === "failed" && "text-danger")}>{STATE_LABELS[study.state]}</span>
        <span className="text-muted">
          {" "}
          · {study.mode === "grid" ? "grid" : "tolerance run"} · {done.toLocaleString("en-GB")} of {total.toLocaleString("en-GB")} runs done
          {failed > 0 && `, ${failed.toLocaleString("en-GB")} failed`} · queued {formatWhen(study.createdAt)}
          {study.createdBy && ` by ${study.createdBy.name}`}
        </span>
      </p>
      {study.error && (
        <p className="rounded border border-danger/60 bg-danger-soft px-3 py-2 text-danger" role="alert">
          The study failed: {study.error.message}
        </p>
      )}
      {study.state === "cancelled" && done + failed < total && <p className="text-muted">Cancelled: the results below cover the runs that ended before.</p>}
      {!studyEnded(study.state) && done + failed > 0 && (
        <p className="text-muted">Results so far, from the runs that have ended; they change as the study runs.</p>
      )}
    </div>
  );
}

function formatWhen(iso: string): string {
  return new Date(iso).toLocaleString("en-GB", { dateStyle: "medium", timeStyle: "short" });
}

function EarlierStudies({ studies, activeId, onChoose }: { studies: StudyListItem[]; activeId: string | null; onChoose: (id: string) => void }) {
  return (
    <details className="text-sm" data-testid="study-list">
      <summary className="cursor-pointer text-muted">Studies of this cell ({studies.length})</summary>
      <ul className="mt-1 flex flex-col gap-1">
        {studies.map((item) => (
          <li key={item.id} className="flex flex-wrap items-center gap-2">
            {item.id === activeId ? (
              <span className="text-ink" aria-current="true">
                Shown
              </span>
            ) : (
              <button type="button" className="text-action hover:underline" onClick={() => onChoose(item.id)}>
                Show
              </button>
            )}
            <span className={clsx(item.state === "failed" && "text-danger")}>
              {formatWhen(item.createdAt)} · {item.createdBy?.name ?? "—"} · {STATE_LABELS[item.state].toLowerCase()} · {item.progress.done} of{" "}
              {item.progress.total} runs
              {item.progress.failed > 0 && `, ${item.progress.failed} failed`}
              {item.revisionId === null ? "" : " · stored with a revision"}
            </span>
          </li>
        ))}
      </ul>
    </details>
  );
}

/**
 * Opens one run of a study as an ordinary server simulation: the open route
 * queues it, the page follows the job like any server run and shows the run
 * stored at its end.
 */
function useOpenRun(derivationId: string) {
  const serverJob = useServerJob(derivationId);
  const queryClient = useQueryClient();
  const [run, setRun] = useState<RunDisplay | null>(null);
  const open = useMutation({
    mutationFn: async ({ studyId, index }: { studyId: string; index: number }) => {
      const job = await serverJob.run(`${studyPath(derivationId, studyId)}/runs/${index}/open`, {});
      return apiFetch<{ run: RunJson }>(`/api/derivations/${derivationId}/runs/${String(job.result?.runId)}`);
    },
    onSuccess: async ({ run: stored }) => {
      setRun(displayOfStoredRun(stored));
      // The simulation cell lists the derivation's stored runs.
      await queryClient.invalidateQueries({ queryKey: ["derivations", derivationId, "runs"] });
    },
  });
  const failure = open.error;
  return {
    open: (studyId: string, index: number) => {
      setRun(null);
      open.mutate({ studyId, index });
    },
    opening: open.isPending ? (open.variables?.index ?? null) : null,
    job: serverJob.job,
    cancel: () => void serverJob.cancel().catch(() => undefined),
    run,
    problem: failure
      ? failure instanceof AppError
        ? failure.message
        : "The run could not be opened."
      : run === null && open.isSuccess
        ? "That run has no trajectory stored."
        : null,
  };
}
