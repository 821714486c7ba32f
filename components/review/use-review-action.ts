"use client";

import { useRouter } from "next/navigation";
import { useCallback, useState } from "react";
import { apiFetch } from "@/lib/api/fetcher";
import { AppError } from "@/lib/errors";
import { useReviewSync } from "./review-sync";

/**
 * One review step against the API: the step waits until the notebook's edits
 * are stored, the request is sent, and the page is refreshed so status, lock
 * and permissions come from the server again.
 */
export function useReviewAction(derivationId: string) {
  const router = useRouter();
  const sync = useReviewSync();
  const [pending, setPending] = useState<string | null>(null);
  const [error, setError] = useState<{ step: string; error: unknown } | null>(null);

  const run = useCallback(
    async (step: string, path: string, body: unknown): Promise<boolean> => {
      setPending(step);
      setError(null);
      try {
        const ready = await sync.prepare();
        if (!ready.ok) throw new AppError("conflict:derivation", ready.message);
        await apiFetch(`/api/derivations/${derivationId}/${path}`, { method: "POST", body });
        // The step is done; a failure to re-read the record must not report it as failed.
        await sync.settle().catch(() => undefined);
        router.refresh();
        return true;
      } catch (caught) {
        setError({ step, error: caught });
        return false;
      } finally {
        setPending(null);
      }
    },
    [derivationId, router, sync],
  );

  const clearError = useCallback(() => setError(null), []);
  return { run, pending, error, clearError, errorOf: (step: string) => (error?.step === step ? error.error : null) };
}
