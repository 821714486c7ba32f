"use client";

/**
 * Keeps the notebook's autosave in step with review steps. A review request
 * captures the content the server holds, so the notebook's edits are saved
 * first; and every step (request, decision, approval, unlock) moves the
 * derivation's record on, so afterwards autosave continues from the server's
 * new version instead of reporting a conflict with itself.
 */
import canonicalize from "canonicalize";
import { createContext, useContext, useEffect, useMemo, useRef, type ReactNode } from "react";
import { apiFetch } from "@/lib/api/fetcher";
import type { DerivationJson } from "@/lib/derivations/views";
import { parseStoredDocument, type DerivationDocument } from "@/lib/notebook/document";

export interface ReviewSync {
  /** Saves the notebook's pending edits; `ok: false` says why they could not be saved. */
  prepare: () => Promise<{ ok: true } | { ok: false; message: string }>;
  /** After a step: continue autosave from the server's version when it holds what this page shows. */
  settle: () => Promise<void>;
}

const standalone: ReviewSync = { prepare: async () => ({ ok: true }), settle: async () => undefined };

const ReviewSyncContext = createContext<ReviewSync>(standalone);

export function useReviewSync(): ReviewSync {
  return useContext(ReviewSyncContext);
}

interface AutosaveHandle {
  saveNow: () => Promise<boolean>;
  reset: (serverDocument: DerivationDocument, serverUpdatedAt: string) => void;
}

export function ReviewSyncProvider({
  derivationId,
  canEdit,
  autosave,
  document,
  children,
}: {
  derivationId: string;
  canEdit: boolean;
  autosave: AutosaveHandle;
  document: DerivationDocument;
  children: ReactNode;
}) {
  const latest = useRef({ canEdit, autosave, document });
  useEffect(() => {
    latest.current = { canEdit, autosave, document };
  });

  const sync = useMemo<ReviewSync>(
    () => ({
      async prepare() {
        if (!latest.current.canEdit) return { ok: true };
        if (await latest.current.autosave.saveNow()) return { ok: true };
        return {
          ok: false,
          message: "Your latest changes are not saved yet, so this step would miss them. Save them (see the save status above), then try again.",
        };
      },
      async settle() {
        const { derivation } = await apiFetch<{ derivation: DerivationJson }>(`/api/derivations/${derivationId}`);
        const stored = parseStoredDocument(derivation.content, { title: derivation.title });
        // Someone else's edit in between stays a conflict for the notebook to show.
        if (stored.ok && canonicalize(stored.document) === canonicalize(latest.current.document)) {
          latest.current.autosave.reset(stored.document, derivation.updatedAt);
        }
      },
    }),
    [derivationId],
  );

  return <ReviewSyncContext.Provider value={sync}>{children}</ReviewSyncContext.Provider>;
}
