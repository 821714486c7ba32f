"use client";

/**
 * Server evaluation of the notebook: the document is posted (unsaved edits
 * included) once edits settle, or at once on request. The server answers from
 * its cache when the model is unchanged. The last good results stay on screen;
 * they are marked stale while they belong to another version of the document
 * or after an evaluation failed, whose diagnostics are returned for the editors.
 * A large model is evaluated by a queue worker: the server answers 202 with the
 * job, the hook follows its progress (`job`, `cancel`) and, once it completed,
 * asks again and gets the answer from the server's cache.
 */
import { keepPreviousData, useQuery } from "@tanstack/react-query";
import { useCallback, useEffect, useMemo, useRef, useState } from "react";
import { apiFetch } from "@/lib/api/fetcher";
import { AppError } from "@/lib/errors";
import type { EvaluationResponse } from "@/lib/evaluation/views";
import type { JobJson } from "@/lib/jobs/views";
import { cancelJob, followJob, jobFailure } from "./simulation/use-server-job";
import type { Model } from "@/lib/mechanics/browser";
import { coordinateNames, documentToModel, type DerivationDocument } from "@/lib/notebook/document";
import type { ModelDiagnostic, NotebookResults } from "@/lib/notebook/results";

export type { EvaluationResponse };

export interface Evaluation {
  results: NotebookResults | null;
  response: EvaluationResponse | null;
  evaluating: boolean;
  stale: boolean;
  /** The latest evaluation's failure, if it failed. */
  error: AppError | null;
  diagnostics: readonly ModelDiagnostic[];
  evaluatedModel: Model | undefined;
  /** The document (as JSON) the results belong to; view choices ask the server about this one. */
  resultsDocumentJson: string | null;
  evaluateNow: () => void;
  /** The queued evaluation of a large model while a queue worker runs it; null otherwise. */
  job: JobJson | null;
  /** Cancels the queued evaluation (the last good results stay). */
  cancel: () => Promise<void>;
}

/** A coordinate, a kinetic and a potential energy: the least the engine can derive from. */
export function modelIsWritten(document: DerivationDocument): boolean {
  const written = (kind: "kinetic" | "potential") => document.cells.some((cell) => cell.kind === kind && cell.expr.trim() !== "");
  return coordinateNames(document).length > 0 && written("kinetic") && written("potential");
}

const NO_DIAGNOSTICS: readonly ModelDiagnostic[] = [];

function diagnosticsOf(error: unknown): readonly ModelDiagnostic[] {
  if (!(error instanceof AppError)) return NO_DIAGNOSTICS;
  const list = (error.details as { diagnostics?: unknown } | undefined)?.diagnostics;
  return Array.isArray(list) ? (list as ModelDiagnostic[]) : NO_DIAGNOSTICS;
}

export function useEvaluation({
  derivationId,
  document,
  settleMs = 1_200,
}: {
  derivationId: string;
  document: DerivationDocument;
  settleMs?: number;
}): Evaluation {
  const json = JSON.stringify(document);
  const [settled, setSettled] = useState(json);
  // A notebook whose model is not written yet has nothing to derive: evaluating it would only list
  // the cells still blank. Wait until it is, or for an explicit request.
  const [requested, setRequested] = useState(false);
  const ready = requested || modelIsWritten(document);
  const [lastGood, setLastGood] = useState<{ json: string; response: EvaluationResponse } | null>(null);

  useEffect(() => {
    if (json === settled) return;
    const timer = setTimeout(() => setSettled(json), settleMs);
    return () => clearTimeout(timer);
  }, [json, settled, settleMs]);

  const [job, setJob] = useState<JobJson | null>(null);
  const jobRef = useRef<JobJson | null>(null);
  const showJob = useCallback((next: JobJson | null) => {
    jobRef.current = next;
    setJob(next);
  }, []);

  const query = useQuery({
    queryKey: ["derivations", derivationId, "evaluation", settled],
    queryFn: async ({ signal }) => {
      const path = `/api/derivations/${derivationId}/evaluate`;
      const body = { document: JSON.parse(settled) as unknown };
      const first = await apiFetch<EvaluationResponse | { job: JobJson }>(path, { method: "POST", body, signal, headers: { prefer: "respond-async" } });
      if (!("job" in first)) return first;
      let ended: JobJson;
      try {
        ended = await followJob(derivationId, first.job, { onUpdate: showJob, signal });
      } finally {
        showJob(null);
      }
      if (ended.state !== "completed") throw jobFailure(ended);
      // The worker stored the answer in the evaluation cache: asking again is a cache hit.
      return apiFetch<EvaluationResponse>(path, { method: "POST", body, signal });
    },
    placeholderData: keepPreviousData,
    staleTime: Infinity,
    gcTime: 5 * 60_000,
    retry: false,
    enabled: ready,
    refetchOnWindowFocus: false,
  });

  // The answer for the settled document, once it arrives, is the one shown until the next arrives
  // (kept while rendering, React's pattern for state that follows other values, not in an effect).
  const fresh = query.isSuccess && !query.isPlaceholderData ? query.data : undefined;
  if (fresh && (lastGood?.response !== fresh || lastGood.json !== settled)) setLastGood({ json: settled, response: fresh });

  const error = query.isError && query.error instanceof AppError ? query.error : query.isError ? new AppError("internal:api", "The evaluation failed.") : null;
  const evaluatedModel = useMemo(() => {
    try {
      return documentToModel(JSON.parse(settled) as DerivationDocument);
    } catch {
      return undefined;
    }
  }, [settled]);

  const { refetch } = query;
  const evaluateNow = useCallback(() => {
    setRequested(true);
    if (json === settled) void refetch();
    else setSettled(json);
  }, [json, settled, refetch]);

  const cancel = useCallback(async () => {
    const running = jobRef.current;
    if (running) showJob(await cancelJob(derivationId, running.id));
  }, [derivationId, showJob]);

  return {
    job,
    cancel,
    results: lastGood?.response.result ?? null,
    response: lastGood?.response ?? null,
    evaluating: query.isFetching,
    stale: lastGood !== null && (lastGood.json !== json || query.isError),
    error,
    diagnostics: query.isError ? diagnosticsOf(query.error) : NO_DIAGNOSTICS,
    evaluatedModel,
    resultsDocumentJson: lastGood?.json ?? null,
    evaluateNow,
  };
}
