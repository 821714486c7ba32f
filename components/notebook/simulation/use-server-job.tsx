"use client";
import { useCallback, useEffect, useRef, useState } from "react";
import { apiFetch } from "@/lib/api/fetcher";
import { AppError, type ErrorCode } from "@/lib/errors";
import type { JobJson } from "@/lib/jobs/views";

const POLL_MS = 500;
const ENDED = new Set(["completed", "failed", "cancelled"]);

/**
 * Polls a queued job until it ends (or `signal` aborts, or `stop()` says so),
 * handing each state to `onUpdate`; the last job seen.
 */
export async function followJob(
  derivationId: string,
  job: JobJson,
  { onUpdate, signal, stop }: { onUpdate: (job: JobJson) => void; signal?: AbortSignal; stop?: () => boolean },
): Promise<JobJson> {
  let latest = job;
  onUpdate(latest);
  while (!ENDED.has(latest.state)) {
    await new Promise((resolve) => setTimeout(resolve, POLL_MS));
    if (signal?.aborted || stop?.()) break;
    ({ job: latest } = await apiFetch<{ job: JobJson }>(`/api/derivations/${derivationId}/jobs/${latest.id}`, { signal }));
    onUpdate(latest);
  }
  return latest;
}

/** A job that did not complete as the AppError the page shows (a cancelled job: `conflict:job`). */
export function jobFailure(job: JobJson): AppError {
  if (job.state === "cancelled") return new AppError("conflict:job", "The job was cancelled.");
  return new AppError((job.error?.code ?? "internal:job") as ErrorCode, job.error?.message ?? "The job failed on the server.", {
    fieldErrors: job.error?.fieldErrors,
    details: job.error?.details,
  });
}

/** Asks the server to cancel a job; the job as it then stands. */
export async function cancelJob(derivationId: string, jobId: string): Promise<JobJson> {
  return (await apiFetch<{ job: JobJson }>(`/api/derivations/${derivationId}/jobs/${jobId}/cancel`, { method: "POST" })).job;
}

/**
 * A server run, fit or report file as a queued job: `run` posts with `Prefer: respond-async`
 * and polls GET …/jobs/[jobId] until the job ends, keeping `job` (state and
 * progress) current for the page; `cancel` asks the server to stop it. `run`
 * resolves with the completed job, or throws the job's error as an AppError
 * (a cancelled job: `conflict:job`).
 */
export function useServerJob(derivationId: string | undefined) {
  const [job, setJob] = useState<JobJson | null>(null);
  const current = useRef<JobJson | null>(null);
  const unmounted = useRef(false);
  useEffect(() => {
    unmounted.current = false;
    return () => {
      unmounted.current = true;
    };
  }, []);

  const show = (next: JobJson | null) => {
    current.current = next;
    if (!unmounted.current) setJob(next);
  };

  const run = useCallback(
    async (path: string, body: unknown): Promise<JobJson> => {
      const { job: queued } = await apiFetch<{ job: JobJson }>(path, { method: "POST", body, headers: { prefer: "respond-async" } });
      let latest: JobJson;
      try {
        // Leaving the page stops the polling, not the job: its answer is stored for later.
        latest = await followJob(derivationId!, queued, { onUpdate: show, stop: () => unmounted.current });
      } finally {
        show(null);
      }
      if (latest.state === "completed") return latest;
      throw jobFailure(latest);
    },
    [derivationId],
  );

  const cancel = useCallback(async () => {
    const running = current.current;
    if (!running || !derivationId) return;
    show(await cancelJob(derivationId, running.id));
  }, [derivationId]);

  return { job, run, cancel };
}

/** The job's state in words, with its progress, for a status line. */
export function jobStatusText(job: JobJson, what: string): string {
  if (job.state === "queued") return `${what} queued on the server…`;
  if (job.state === "running") return `${what} running on the server… ${Math.round(job.progress * 100)} %`;
  return `${what} ${job.state}.`;
}

/** Progress bar, status line and Cancel button of a queued job. */
export function ServerJobStatus({ job, what, onCancel }: { job: JobJson; what: string; onCancel: () => void }) {
  return (
    <span className="flex flex-wrap items-center gap-2" data-testid="server-job-status">
      <progress className="h-2 w-40 max-w-full accent-[var(--action)]" max={1} value={job.progress} aria-label={`${what} progress on the server`} />
      <span className="text-xs text-muted tabular-nums" role="status">
        {jobStatusText(job, what)}
      </span>
      <button type="button" className="rounded border border-line px-2 py-0.5 text-sm hover:border-danger hover:text-danger" onClick={onCancel}>
        Cancel
      </button>
    </span>
  );
}
