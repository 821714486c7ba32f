"use client";

/**
 * This person's own view of the derivation (lib/notebook/view-preferences.ts):
 * the choices apply at once on this page and are stored for the person a
 * moment later through their own route. They never touch the document, so
 * they never edit it, never re-evaluate it and never change who last
 * edited it; anyone who may read the derivation may make them.
 */
import { useCallback, useEffect, useRef, useState } from "react";
import { apiFetch } from "@/lib/api/fetcher";
import { AppError } from "@/lib/errors";
import { setViewChoice, type ViewChoice, type ViewPreferences } from "@/lib/notebook/view-preferences";

export type ViewChoicePatch = Partial<Record<keyof ViewChoice, ViewChoice[keyof ViewChoice] | undefined>>;

export interface ViewPreferencesState {
  preferences: ViewPreferences;
  /** Lays a choice over the author's default for one cell (`undefined` goes back to the default). */
  choose: (cellId: string, patch: ViewChoicePatch) => void;
  /**
   * Lays simulation settings over a simulation cell's (`cellId`), or over the
   * defaults of the person's own simulation when the derivation has none (`null`);
   * `undefined` drops them (back to the document's).
   */
  changeSimulation: (cellId: string | null, patch: Record<string, unknown> | undefined) => void;
  /** Why the latest choices could not be stored; they still apply on this page. */
  saveError: string | null;
}

export function useViewPreferences({
  derivationId,
  initial,
  settleMs = 500,
}: {
  derivationId: string;
  initial: ViewPreferences;
  settleMs?: number;
}): ViewPreferencesState {
  const [preferences, setPreferences] = useState(initial);
  const [saveError, setSaveError] = useState<string | null>(null);
  const stored = useRef(JSON.stringify(initial));
  const saving = useRef(false);
  const latest = useRef(preferences);
  useEffect(() => {
    latest.current = preferences;
  }, [preferences]);

  const store = useCallback(async () => {
    // One request at a time; whatever changed meanwhile is sent when it returns.
    if (saving.current) return;
    saving.current = true;
    try {
      while (JSON.stringify(latest.current) !== stored.current) {
        const sending = latest.current;
        await apiFetch(`/api/derivations/${derivationId}/view-preferences`, { method: "PUT", body: { preferences: sending } });
        stored.current = JSON.stringify(sending);
      }
      setSaveError(null);
    } catch (error) {
      setSaveError(error instanceof AppError ? error.message : "Your view choices could not be stored.");
    } finally {
      saving.current = false;
    }
  }, [derivationId]);

  useEffect(() => {
    if (JSON.stringify(preferences) === stored.current) return;
    const timer = setTimeout(() => void store(), settleMs);
    return () => clearTimeout(timer);
  }, [preferences, settleMs, store]);

  // Leaving the page (or this derivation) before the choices settled: send them on their way anyway.
  useEffect(() => {
    const flush = () => {
      if (JSON.stringify(latest.current) === stored.current) return;
      void fetch(`/api/derivations/${derivationId}/view-preferences`, {
        method: "PUT",
        keepalive: true,
        credentials: "same-origin",
        headers: { "content-type": "application/json" },
        body: JSON.stringify({ preferences: latest.current }),
      }).catch(() => undefined);
    };
    window.addEventListener("pagehide", flush);
    return () => {
      window.removeEventListener("pagehide", flush);
      flush();
    };
  }, [derivationId]);

  const choose = useCallback((cellId: string, patch: ViewChoicePatch) => setPreferences((current) => setViewChoice(current, cellId, patch)), []);
  const changeSimulation = useCallback(
    (cellId: string | null, patch: Record<string, unknown> | undefined) =>
      setPreferences((current) => {
        if (cellId !== null) return setViewChoice(current, cellId, { simulation: patch && { ...current.cells[cellId]?.simulation, ...patch } });
        const { ownSimulation, ...rest } = current;
        return patch === undefined ? rest : { ...rest, ownSimulation: { ...ownSimulation, ...patch } };
      }),
    [],
  );

  return { preferences, choose, changeSimulation, saveError };
}
