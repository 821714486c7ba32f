"use client";

/**
 * The comment threads of the derivation on screen, shared by the side panel,
 * the counts in the cells' margins and the counts beside equation terms. The
 * page mounts one CommentsProvider around the notebook; cells read it through
 * the hooks below and render nothing when there is none (e.g. the report).
 *
 * Anchors are resolved here against what the page shows now: a term thread
 * against the current results' term keys (attached or outdated), a text thread
 * against the live shared document's Y.Text of its field (attached or detached).
 */
import { createContext, useCallback, useContext, useEffect, useMemo, useState, type ReactNode } from "react";
import type * as Y from "yjs";
import { liveTermsOf, parseTermKey, termThreadState, type LiveTerm, type TermAddress } from "@/lib/comments/term-anchor";
import { resolveTextAnchor } from "@/lib/comments/text-anchor";
import type { ThreadView, ThreadsAnswer } from "@/lib/comments/views";
import { fieldTextOf } from "@/lib/comments/field-paths";
import { useCommentThreads, type NewAnchor } from "./use-comment-threads";

export type AnchorState =
  | { kind: "term"; state: "attached"; term: LiveTerm }
  | { kind: "term"; state: "outdated" | "unknown" }
  | { kind: "text"; state: "attached"; text: string }
  | { kind: "text"; state: "detached" | "unknown" };

export interface EquationTerms {
  coordinate: string;
  terms?: readonly { id: string; text: string; latex: string }[];
}

interface CommentsContextValue {
  derivationId: string;
  answer: ThreadsAnswer | undefined;
  loading: boolean;
  error: Error | null;
  states: ReadonlyMap<string, AnchorState>;
  /** Open threads per cell (text anchors in the cell, term threads on its equations). */
  cellCounts: ReadonlyMap<string, number>;
  /** Open threads per attached term key. */
  termCounts: ReadonlyMap<string, number>;
  panelOpen: boolean;
  setPanelOpen: (open: boolean) => void;
  /** The thread shown open in the panel. */
  selectedThreadId: string | null;
  selectThread: (threadId: string | null) => void;
  /** Filter the panel to one cell's threads (from its margin count); null shows all. */
  cellFilter: string | null;
  showCell: (cellId: string | null) => void;
  /** The anchor of a thread being written, before it exists. */
  draft: NewAnchor | null;
  setDraft: (anchor: NewAnchor | null) => void;
  /** A term was chosen in an equation: its thread if it has one, else a new one. */
  openTerm: (address: TermAddress) => void;
  /** The term key the panel points at (highlighted in the equations). */
  activeTermKey: string | null;
  ydoc: Y.Doc | null;
  cells: readonly { id: string; kind: string }[];
}

const CommentsContext = createContext<CommentsContextValue | null>(null);

export function useComments(): CommentsContextValue | null {
  return useContext(CommentsContext);
}

/** The number of open threads in a cell's margin (0 without a provider). */
export function useCellCommentCount(cellId: string): number {
  return useContext(CommentsContext)?.cellCounts.get(cellId) ?? 0;
}

function resolveThread(thread: ThreadView, liveByCell: (cellId: string) => ReadonlyMap<string, LiveTerm> | null, ydoc: Y.Doc | null): AnchorState {
  const anchor = thread.anchor;
  if (anchor.kind === "term") {
    const address = parseTermKey(anchor.key);
    const resolved = termThreadState(anchor.key, address ? liveByCell(address.cellId) : null);
    return resolved.state === "attached" ? { kind: "term", state: "attached", term: resolved.term } : { kind: "term", state: resolved.state };
  }
  if (!ydoc) return { kind: "text", state: "unknown" };
  const text = fieldTextOf(ydoc, anchor.cellId, anchor.fieldPath);
  const resolved = resolveTextAnchor(ydoc, text, { start: fromBase64(anchor.start), end: fromBase64(anchor.end) });
  return resolved.state === "attached" ? { kind: "text", state: "attached", text: resolved.text } : { kind: "text", state: "detached" };
}

function fromBase64(value: string): Uint8Array {
  const binary = atob(value);
  const bytes = new Uint8Array(binary.length);
  for (let i = 0; i < binary.length; i++) bytes[i] = binary.charCodeAt(i);
  return bytes;
}

export function toBase64(bytes: Uint8Array): string {
  let binary = "";
  for (const byte of bytes) binary += String.fromCharCode(byte);
  return btoa(binary);
}

export interface CommentsSourceProps {
  /** The cells on screen (ids and kinds), so threads on a removed equations cell read as outdated. */
  cells: readonly { id: string; kind: string }[];
  /** The current results' equations with their terms; undefined while there are none. */
  equations?: readonly EquationTerms[];
  /** The live shared document, once connected; text anchors resolve against it. */
  ydoc?: Y.Doc | null;
}

type SourceSetter = (source: CommentsSourceProps) => void;
const SourceContext = createContext<SourceSetter | null>(null);

/**
 * Tells the provider what the notebook shows now (cells, results, the shared
 * document). Rendered inside the notebook page, which owns that state; renders nothing.
 */
export function CommentsSource({ cells, equations, ydoc = null }: CommentsSourceProps) {
  const setSource = useContext(SourceContext);
  useEffect(() => {
    setSource?.({ cells, equations, ydoc });
  }, [setSource, cells, equations, ydoc]);
  return null;
}

const NO_CELLS: readonly { id: string; kind: string }[] = [];

export function CommentsProvider({ derivationId, children }: { derivationId: string; children: ReactNode }) {
  const [source, setSource] = useState<CommentsSourceProps>({ cells: NO_CELLS });
  const { cells, equations } = source;
  const ydoc = source.ydoc ?? null;
  const query = useCommentThreads(derivationId);
  const [panelOpen, setPanelOpen] = useState(false);
  const [selectedThreadId, setSelectedThreadId] = useState<string | null>(null);
  const [cellFilter, setCellFilter] = useState<string | null>(null);
  const [draft, setDraft] = useState<NewAnchor | null>(null);
  // Text anchors move with every edit: re-resolve when the shared document changes (once per frame at most).
  const [docVersion, setDocVersion] = useState(0);
  useEffect(() => {
    if (!ydoc) return;
    let frame = 0;
    const onUpdate = () => {
      cancelAnimationFrame(frame);
      frame = requestAnimationFrame(() => setDocVersion((version) => version + 1));
    };
    ydoc.on("update", onUpdate);
    return () => {
      cancelAnimationFrame(frame);
      ydoc.off("update", onUpdate);
    };
  }, [ydoc]);

  // A link from a mention e-mail names the thread: open the panel on it.
  useEffect(() => {
    const thread = new URLSearchParams(window.location.search).get("thread");
    if (thread) {
      // eslint-disable-next-line react-hooks/set-state-in-effect -- state read from the address, known only in the browser
      setSelectedThreadId(thread);
      setPanelOpen(true);
    }
  }, []);

  const equationCellIds = useMemo(() => new Set(cells.filter((cell) => cell.kind === "equations").map((cell) => cell.id)), [cells]);
  const liveByCell = useMemo(() => {
    const byCell = new Map<string, ReadonlyMap<string, LiveTerm>>(
      [...equationCellIds].map((cellId) => [cellId, new Map(liveTermsOf(equations, cellId).map((term) => [term.key, term]))]),
    );
    const none: ReadonlyMap<string, LiveTerm> = new Map();
    return (cellId: string) => (equations ? (byCell.get(cellId) ?? none) : null);
  }, [equations, equationCellIds]);

  const answer = query.data;
  const states = useMemo(() => {
    void docVersion;
    return new Map((answer?.threads ?? []).map((thread) => [thread.id, resolveThread(thread, liveByCell, ydoc)]));
  }, [answer, liveByCell, ydoc, docVersion]);

  const { cellCounts, termCounts } = useMemo(() => {
    const perCell = new Map<string, number>();
    const perTerm = new Map<string, number>();
    for (const thread of answer?.threads ?? []) {
      if (thread.status !== "open") continue;
      const cellId = thread.anchor.kind === "term" ? parseTermKey(thread.anchor.key)?.cellId : thread.anchor.cellId;
      if (cellId) perCell.set(cellId, (perCell.get(cellId) ?? 0) + 1);
      const state = states.get(thread.id);
      if (thread.anchor.kind === "term" && state?.state === "attached") perTerm.set(thread.anchor.key, (perTerm.get(thread.anchor.key) ?? 0) + 1);
    }
    return { cellCounts: perCell, termCounts: perTerm };
  }, [answer, states]);

  const selectThread = useCallback((threadId: string | null) => {
    setSelectedThreadId(threadId);
    if (threadId) {
      setDraft(null);
      setPanelOpen(true);
    }
  }, []);

  const showCell = useCallback((cellId: string | null) => {
    setCellFilter(cellId);
    setSelectedThreadId(null);
    if (cellId) setPanelOpen(true);
  }, []);

  const openTerm = useCallback(
    (address: TermAddress) => {
      const key = `${address.cellId}/${address.coordinate}/${address.termId}`;
      const existing = answer?.threads.find((thread) => thread.anchor.kind === "term" && thread.anchor.key === key && thread.status === "open");
      setPanelOpen(true);
      setCellFilter(null);
      if (existing) {
        setSelectedThreadId(existing.id);
        setDraft(null);
        return;
      }
      setSelectedThreadId(null);
      const term = liveByCell(address.cellId)?.get(key);
      if (term && answer?.mayComment) {
        setDraft({ kind: "term", cellId: address.cellId, coordinate: address.coordinate, termId: address.termId, termText: term.text, termLatex: term.latex });
      }
    },
    [answer, liveByCell],
  );

  const selected = answer?.threads.find((thread) => thread.id === selectedThreadId);
  const activeTermKey =
    draft?.kind === "term" ? `${draft.cellId}/${draft.coordinate}/${draft.termId}` : selected?.anchor.kind === "term" ? selected.anchor.key : null;

  const value: CommentsContextValue = {
    derivationId,
    answer,
    loading: query.isPending,
    error: query.error,
    states,
    cellCounts,
    termCounts,
    panelOpen,
    setPanelOpen,
    selectedThreadId,
    selectThread,
    cellFilter,
    showCell,
    draft,
    setDraft,
    openTerm,
    activeTermKey,
    ydoc,
    cells,
  };
  return (
    <SourceContext.Provider value={setSource}>
      <CommentsContext.Provider value={value}>{children}</CommentsContext.Provider>
    </SourceContext.Provider>
  );
}
