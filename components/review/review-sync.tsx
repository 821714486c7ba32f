"use client";

/**
 * Keeps review steps in step with the shared document. A review request
 * captures the content the server holds, so before a step the notebook's edits
 * must be stored (and the server's JSON copy current); a step that cannot wait
 * for that is refused with the reason instead of capturing an older version.
 */
import { createContext, useContext, useEffect, useMemo, useRef, type ReactNode } from "react";

export interface ReviewSync {
  /** Waits for the notebook's edits to be stored; `ok: false` says why they are not. */
  prepare: () => Promise<{ ok: true } | { ok: false; message: string }>;
  /** After a step (the page is refreshed from the server afterwards). */
  settle: () => Promise<void>;
}

const standalone: ReviewSync = { prepare: async () => ({ ok: true }), settle: async () => undefined };

const ReviewSyncContext = createContext<ReviewSync>(standalone);

export function useReviewSync(): ReviewSync {
  return useContext(ReviewSyncContext);
}

export const NOT_STORED_MESSAGE =
  "Your latest edits have not reached the server yet, so this step would miss them. Wait until the page says Saved (see the connection status above), then try again.";

export function ReviewSyncProvider({
  canEdit,
  whenStored,
  children,
}: {
  canEdit: boolean;
  /** Resolves true once the server holds everything this page shows (edits stored, JSON copy current). */
  whenStored: () => Promise<boolean>;
  children: ReactNode;
}) {
  const latest = useRef({ canEdit, whenStored });
  useEffect(() => {
    latest.current = { canEdit, whenStored };
  });

  const sync = useMemo<ReviewSync>(
    () => ({
      async prepare() {
        if (!latest.current.canEdit) return { ok: true };
        return (await latest.current.whenStored()) ? { ok: true } : { ok: false, message: NOT_STORED_MESSAGE };
      },
      async settle() {
        // Nothing to reconcile: the shared document carries on, and the page re-reads status and lock.
      },
    }),
    [],
  );

  return <ReviewSyncContext.Provider value={sync}>{children}</ReviewSyncContext.Provider>;
}
