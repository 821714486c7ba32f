/**
 * Follows a shared Y.Doc as a notebook document: after any change (this
 * client's or anyone's) the document is read again through the one document
 * validation, at most once per animation frame, so a burst of remote updates
 * costs one render.
 */
import type * as Y from "yjs";
import type { DerivationDocument } from "@/lib/notebook/document";
import { isSharedDocEmpty, yDocToDocument } from "@/lib/notebook/document/shared-doc";

export interface DocumentState {
  document: DerivationDocument | null;
  /** Why the shared document could not be read (the last good document stays). */
  problem: string | null;
}

function nextFrame(run: () => void): () => void {
  if (typeof requestAnimationFrame === "function") {
    const id = requestAnimationFrame(run);
    return () => cancelAnimationFrame(id);
  }
  const id = setTimeout(run, 16);
  return () => clearTimeout(id);
}

/** Calls `onChange` with the document after every change, batched per frame; returns the unsubscribe. */
export function observeDocument(ydoc: Y.Doc, onChange: (state: Partial<DocumentState>) => void): () => void {
  let cancel: (() => void) | null = null;
  const read = () => {
    cancel = null;
    // Still empty: the server's copy has not arrived.
    if (isSharedDocEmpty(ydoc)) return;
    try {
      onChange({ document: yDocToDocument(ydoc), problem: null });
    } catch (error) {
      onChange({ problem: error instanceof Error ? error.message : "The shared document could not be read." });
    }
  };
  const schedule = () => {
    cancel ??= nextFrame(read);
  };
  const cells = ydoc.getArray("cells");
  const meta = ydoc.getMap("meta");
  cells.observeDeep(schedule);
  meta.observeDeep(schedule);
  schedule();
  return () => {
    cells.unobserveDeep(schedule);
    meta.unobserveDeep(schedule);
    cancel?.();
  };
}
