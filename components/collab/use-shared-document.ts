"use client";

/**
 * The shared document of one open derivation, for React: one SharedSession
 * (Y.Doc, provider, presence, undo history) per mounted page, created in an
 * effect and destroyed in its cleanup, so React's double-run of effects in
 * development builds and destroys a whole session instead of leaking one.
 *
 * The notebook's document is read from the Y.Doc (`yDocToDocument`) at most
 * once per animation frame, whoever changed it.
 */
import { useEffect, useState, useSyncExternalStore } from "react";
import { apiFetch } from "@/lib/api/fetcher";
import type { DerivationDocument } from "@/lib/notebook/document";
import { observeDocument } from "./document-state";
import { SharedSession, type CollabTicket, type ProviderFactory, type SessionSnapshot } from "./shared-session";

export interface SharedDocumentOptions {
  derivationId: string;
  /** The document the page was rendered with; shown (read-only) until the server's copy arrives. */
  initialDocument: DerivationDocument;
  /** Tests connect to an in-memory server instead of a websocket. */
  createProvider?: ProviderFactory;
  fetchTicket?: (derivationId: string) => Promise<CollabTicket>;
  /** A new value starts a new session (a new ticket, e.g. after the right to edit changed). */
  generation?: unknown;
}

export interface SharedDocument extends SessionSnapshot {
  session: SharedSession | null;
  /** Synced, and the server lets this person write: editors may change the shared document. */
  editable: boolean;
  /** The current document: the shared one once synced, the page's until then. */
  document: DerivationDocument;
  /** The shared document could not be read as a notebook (the last readable one stays shown). */
  problem: string | null;
}

const CONNECTING: SessionSnapshot = { connection: { state: "connecting" }, synced: false, pending: 0, readOnly: true, user: null, peers: [] };
const noSubscription = () => () => undefined;

export function fetchCollabTicket(derivationId: string): Promise<CollabTicket> {
  return apiFetch<CollabTicket>(`/api/derivations/${derivationId}/collab-token`, { method: "POST" });
}

export function useSharedDocument(options: SharedDocumentOptions): SharedDocument {
  const { derivationId, createProvider, generation } = options;
  const fetchTicket = options.fetchTicket ?? fetchCollabTicket;
  const [session, setSession] = useState<SharedSession | null>(null);
  const [state, setState] = useState<{ document: DerivationDocument | null; problem: string | null }>({ document: null, problem: null });

  useEffect(() => {
    const created = new SharedSession({ derivationId, fetchTicket, createProvider });
    const stopObserving = observeDocument(created.ydoc, (next) => setState((current) => ({ ...current, ...next })));
    created.start();
    // eslint-disable-next-line react-hooks/set-state-in-effect -- the session is an external system created here and handed to render
    setSession(created);
    return () => {
      stopObserving();
      created.destroy();
      setSession((current) => (current === created ? null : current));
      setState({ document: null, problem: null });
    };
    // One session per derivation (and generation); a new fetcher or provider factory does not reconnect.
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [derivationId, generation]);

  const snapshot = useSyncExternalStore(session?.subscribe ?? noSubscription, session?.getSnapshot ?? (() => CONNECTING), () => CONNECTING);
  const synced = snapshot.synced && state.document !== null;
  return {
    ...snapshot,
    synced,
    // Until the shared copy is here nobody edits: an edit to the page's copy would have nowhere to go.
    // A refused connection stores nothing more: editing stops there too.
    editable: synced && !snapshot.readOnly && snapshot.user !== null && snapshot.connection.state !== "refused",
    session,
    document: state.document ?? options.initialDocument,
    problem: state.problem,
  };
}
