"use client";

import { EditorView } from "@codemirror/view";
import { createTextAnchor } from "@/lib/comments/text-anchor";
import { fieldPathsWithContent, fieldTextOf } from "@/lib/comments/field-paths";
import type * as Y from "yjs";
import { toBase64 } from "./comments-context";
import type { NewAnchor } from "./use-comment-threads";

let lastEditor: HTMLElement | null = null;

/** Remembers the editor that last had the focus, so a button elsewhere can comment on its selection. */
export function trackEditorFocus(): () => void {
  const onFocusIn = (event: FocusEvent) => {
    const editor = event.target instanceof Element ? event.target.closest<HTMLElement>(".cm-editor") : null;
    if (editor) lastEditor = editor;
  };
  document.addEventListener("focusin", onFocusIn);
  return () => document.removeEventListener("focusin", onFocusIn);
}

/**
 * The anchor of the text selected in the last focused editor, or why there is none.
 * The editor's text is the field's Y.Text (bound one to one), so its offsets are the Y.Text's.
 */
export function anchorFromSelection(ydoc: Y.Doc | null): { anchor: NewAnchor } | { problem: string } {
  if (!ydoc) return { problem: "Comments on text need the live document; it is not connected." };
  if (!lastEditor?.isConnected) return { problem: "Select some text in an editor first." };
  const view = EditorView.findFromDOM(lastEditor);
  const cell = lastEditor.closest<HTMLElement>("[data-cell-id]");
  if (!view || !cell?.dataset.cellId) return { problem: "Select some text in an editor first." };
  const { from, to } = view.state.selection.main;
  if (to <= from) return { problem: "Select some text in an editor first." };
  const content = view.state.doc.toString();
  const declared = lastEditor.closest<HTMLElement>("[data-field-path]")?.dataset.fieldPath;
  // Editors bound to a field hold exactly its text; the one field of the cell with that text is the one selected in.
  const candidates = declared ? [declared] : fieldPathsWithContent(ydoc, cell.dataset.cellId, content);
  if (candidates.length !== 1) {
    return {
      problem:
        candidates.length === 0
          ? "This editor is not in step with the live document yet; try again in a moment."
          : "Two fields of this cell hold the same text, so the comment cannot tell which one is meant.",
    };
  }
  const fieldPath = candidates[0]!;
  const text = fieldTextOf(ydoc, cell.dataset.cellId, fieldPath);
  if (!text || text.toString() !== content) return { problem: "This editor is not in step with the live document yet; try again in a moment." };
  const anchor = createTextAnchor(text, from, to - from);
  return {
    anchor: { kind: "text", cellId: cell.dataset.cellId, fieldPath, start: toBase64(anchor.start), end: toBase64(anchor.end), quote: anchor.quote },
  };
}
