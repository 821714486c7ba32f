"use client";

/**
 * Autosave for the notebook document.
 *
 * Every change is written at once to a local draft (localStorage) and sent to
 * the server after the typing settles. The draft is removed only when the
 * server has confirmed exactly that document, so a failed save, a closed tab
 * or a crash never loses what was typed. Failures the server may recover from
 * (network, 5xx, 429) are retried with growing delays; a refusal (403, 400)
 * waits for the user; a conflict (409) stops saving until the page resolves it.
 */
import { useCallback, useEffect, useRef, useState } from "react";
import { AppError } from "@/lib/errors";
import { parseStoredDocument, type DerivationDocument } from "@/lib/notebook/document";

export type SaveStatus =
  | { state: "saved"; savedAt: string | null }
  | { state: "unsaved" }
  | { state: "saving"; attempt: number }
  | { state: "retrying"; attempt: number; retryAt: number; message: string }
  | { state: "refused"; message: string }
  | { state: "conflict"; message: string };

export interface SaveResult {
  /** The row's updatedAt after the save: the base of the next one. */
  updatedAt: string;
}

export type SaveFunction = (document: DerivationDocument, baseUpdatedAt: string | null) => Promise<SaveResult>;

export interface DraftRecord {
  document: DerivationDocument;
  /** The server version the draft was edited from. */
  baseUpdatedAt: string | null;
  writtenAt: string;
}

/** Growing pauses between automatic retries; the last one repeats. */
export const RETRY_DELAYS_MS = [2_000, 5_000, 10_000, 20_000, 30_000] as const;

export function draftKey(derivationId: string): string {
  return `holonomy:draft:${derivationId}`;
}

/**
 * The unsaved draft kept for a derivation, if any (and readable). A draft an
 * earlier version of the page wrote is migrated like stored content.
 */
export function readDraft(storage: Storage | undefined, derivationId: string): DraftRecord | null {
  try {
    const text = storage?.getItem(draftKey(derivationId));
    if (!text) return null;
    const draft = JSON.parse(text) as Omit<DraftRecord, "document"> & { document: unknown };
    if (!draft || typeof draft !== "object") return null;
    const parsed = parseStoredDocument(draft.document);
    return parsed.ok ? { ...draft, document: parsed.document } : null;
  } catch {
    return null;
  }
}

function writeDraft(storage: Storage | undefined, derivationId: string, draft: DraftRecord): void {
  try {
    storage?.setItem(draftKey(derivationId), JSON.stringify(draft));
  } catch {
    // A full or disabled storage must not stop editing; the server save still runs.
  }
}

export function removeDraft(storage: Storage | undefined, derivationId: string): void {
  try {
    storage?.removeItem(draftKey(derivationId));
  } catch {
    // ignore, as above
  }
}

function browserStorage(): Storage | undefined {
  try {
    return typeof window === "undefined" ? undefined : window.localStorage;
  } catch {
    return undefined;
  }
}

/** Whether retrying the same request later can succeed. */
function isTransient(error: unknown): boolean {
  if (!(error instanceof AppError)) return true;
  return error.status >= 500 || error.status === 429 || error.status === 408;
}

export interface AutosaveOptions {
  derivationId: string;
  document: DerivationDocument;
  /** The server's updatedAt for the document the page loaded. */
  initialUpdatedAt: string | null;
  /** The document the server holds when the page loads (defaults to `document`). */
  initialServerDocument?: DerivationDocument;
  /** False for readers: nothing is saved or drafted. */
  enabled: boolean;
  save: SaveFunction;
  debounceMs?: number;
  retryDelaysMs?: readonly number[];
  storage?: Storage;
}

export interface Autosave {
  status: SaveStatus;
  /** Saves now, skipping the pause; resolves true once the server holds the current document. */
  saveNow: () => Promise<boolean>;
  /** After a conflict: keep this copy and save it over the server's newer version. */
  overwrite: (serverUpdatedAt: string) => Promise<boolean>;
  /** After a reload: the server's document and version become the confirmed state. */
  reset: (serverDocument: DerivationDocument, serverUpdatedAt: string) => void;
}

export function useAutosave(options: AutosaveOptions): Autosave {
  const { derivationId, document, enabled, debounceMs = 1_000 } = options;
  // Held in a ref so a new array from the caller does not rebuild the callbacks on every render.
  const retryDelays = useRef(options.retryDelaysMs ?? RETRY_DELAYS_MS);
  const json = JSON.stringify(document);

  const [status, setStatus] = useState<SaveStatus>({ state: "saved", savedAt: options.initialUpdatedAt });
  const statusRef = useRef(status);
  const confirmedJson = useRef(JSON.stringify(options.initialServerDocument ?? document));
  const base = useRef(options.initialUpdatedAt);
  const latest = useRef({ json, document });
  const timer = useRef<ReturnType<typeof setTimeout> | null>(null);
  const inFlight = useRef<Promise<boolean> | null>(null);
  const attempt = useRef(0);
  const saveRef = useRef(options.save);
  const storageRef = useRef(options.storage);

  useEffect(() => {
    saveRef.current = options.save;
    storageRef.current = options.storage;
    retryDelays.current = options.retryDelaysMs ?? RETRY_DELAYS_MS;
  });

  const update = useCallback((next: SaveStatus) => {
    statusRef.current = next;
    setStatus(next);
  }, []);

  const storage = useCallback(() => storageRef.current ?? browserStorage(), []);

  const clearTimer = useCallback(() => {
    if (timer.current) clearTimeout(timer.current);
    timer.current = null;
  }, []);

  // One request at a time; when it ends, the newest document decides what follows.
  const run = useCallback((): Promise<boolean> => {
    clearTimer();
    // After a failed request the retry schedule (or the user) decides; after a success, newer text goes next.
    if (inFlight.current)
      return inFlight.current.then((ok) =>
        !ok && statusRef.current.state !== "unsaved" ? false : latest.current.json === confirmedJson.current ? true : run(),
      );
    if (statusRef.current.state === "conflict") return Promise.resolve(false);
    const sent = latest.current;
    if (sent.json === confirmedJson.current) {
      update({ state: "saved", savedAt: base.current });
      removeDraft(storage(), derivationId);
      return Promise.resolve(true);
    }
    attempt.current += 1;
    update({ state: "saving", attempt: attempt.current });
    const request = saveRef.current(sent.document, base.current).then(
      (result) => {
        inFlight.current = null;
        attempt.current = 0;
        confirmedJson.current = sent.json;
        base.current = result.updatedAt;
        if (latest.current.json === sent.json) {
          removeDraft(storage(), derivationId);
          update({ state: "saved", savedAt: result.updatedAt });
          return true;
        }
        // Typed on while the request ran: save the newer text next.
        update({ state: "unsaved" });
        timer.current = setTimeout(() => void run(), debounceMs);
        return false;
      },
      (error: unknown) => {
        inFlight.current = null;
        const message = error instanceof Error ? error.message : "The save failed.";
        if (error instanceof AppError && error.status === 409) {
          attempt.current = 0;
          update({ state: "conflict", message });
        } else if (!isTransient(error)) {
          attempt.current = 0;
          update({ state: "refused", message });
        } else {
          const delays = retryDelays.current;
          const delay = delays[Math.min(attempt.current - 1, delays.length - 1)] ?? 30_000;
          update({ state: "retrying", attempt: attempt.current, retryAt: Date.now() + delay, message });
          timer.current = setTimeout(() => void run(), delay);
        }
        return false;
      },
    );
    inFlight.current = request;
    return request;
  }, [clearTimer, debounceMs, derivationId, storage, update]);

  // Every change: keep the draft, then save once typing pauses.
  useEffect(() => {
    latest.current = { json, document };
    if (!enabled) return;
    if (json === confirmedJson.current) {
      if (!inFlight.current && statusRef.current.state !== "conflict") {
        clearTimer();
        removeDraft(storage(), derivationId);
        if (statusRef.current.state !== "saved") update({ state: "saved", savedAt: base.current });
      }
      return;
    }
    writeDraft(storage(), derivationId, { document, baseUpdatedAt: base.current, writtenAt: new Date().toISOString() });
    const state = statusRef.current.state;
    // A conflict waits for the user; a pending retry keeps its own schedule.
    if (state === "conflict" || state === "retrying") return;
    if (state !== "saving" && state !== "unsaved") update({ state: "unsaved" });
    if (!inFlight.current) {
      clearTimer();
      timer.current = setTimeout(() => void run(), debounceMs);
    }
    // `json` is `document` serialised; both change together.
  }, [json, document, enabled, debounceMs, derivationId, run, clearTimer, update, storage]);

  useEffect(() => clearTimer, [clearTimer]);

  // Leaving the page with unconfirmed changes: the browser asks first (the draft is kept either way).
  useEffect(() => {
    if (!enabled) return;
    function onBeforeUnload(event: BeforeUnloadEvent) {
      if (latest.current.json !== confirmedJson.current) event.preventDefault();
    }
    window.addEventListener("beforeunload", onBeforeUnload);
    return () => window.removeEventListener("beforeunload", onBeforeUnload);
  }, [enabled]);

  const saveNow = useCallback((): Promise<boolean> => {
    if (!enabled) return Promise.resolve(false);
    if (statusRef.current.state === "refused" || statusRef.current.state === "retrying") attempt.current = 0;
    return run();
  }, [enabled, run]);

  const overwrite = useCallback(
    (serverUpdatedAt: string): Promise<boolean> => {
      base.current = serverUpdatedAt;
      confirmedJson.current = "";
      update({ state: "unsaved" });
      return run();
    },
    [run, update],
  );

  const reset = useCallback(
    (serverDocument: DerivationDocument, serverUpdatedAt: string) => {
      clearTimer();
      attempt.current = 0;
      base.current = serverUpdatedAt;
      confirmedJson.current = JSON.stringify(serverDocument);
      update({ state: "saved", savedAt: serverUpdatedAt });
    },
    [clearTimer, update],
  );

  return { status, saveNow, overwrite, reset };
}
