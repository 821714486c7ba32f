"use client";

import { useMutation } from "@tanstack/react-query";
import { useRouter } from "next/navigation";
import { useCallback } from "react";
import { apiFetch } from "@/lib/api/fetcher";
import { AppError } from "@/lib/errors";
import { useReviewSync } from "./review-sync";

interface ReviewStep {
  /** Which step (the panel shows pending state and errors beside it). */
  step: string;
  /** The route below /api/derivations/{id}/ that takes the step. */
  path: string;
  body: unknown;
}

/**
 * One review step against the API: the step waits until the notebook's edits
 * are stored, the request is sent, and the page is refreshed so status, lock
 * and permissions come from the server again.
 */
export function useReviewAction(derivationId: string) {
  const router = useRouter();
  const sync = useReviewSync();
  const mutation = useMutation({
    mutationFn: async ({ path, body }: ReviewStep) => {
      const ready = await sync.prepare();
      if (!ready.ok) throw new AppError("conflict:derivation", ready.message);
      await apiFetch(`/api/derivations/${derivationId}/${path}`, { method: "POST", body });
      // The step is done; a failure to re-read the record must not report it as failed.
      await sync.settle().catch(() => undefined);
    },
    onSuccess: () => router.refresh(),
  });
  const { mutateAsync, reset } = mutation;

  const run = useCallback(
    (step: string, path: string, body: unknown): Promise<boolean> =>
      mutateAsync({ step, path, body }).then(
        () => true,
        () => false,
      ),
    [mutateAsync],
  );

  const pending = mutation.isPending ? mutation.variables.step : null;
  const error = mutation.isError ? { step: mutation.variables.step, error: mutation.error as unknown } : null;
  return { run, pending, error, clearError: reset, errorOf: (step: string) => (error?.step === step ? error.error : null) };
}
