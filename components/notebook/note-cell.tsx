"use client";

import { useEffect, useState, type KeyboardEvent } from "react";
import { useSharedField } from "@/components/collab/shared-context";
import { SharedTextarea } from "@/components/collab/shared-text-input";
import type { DocumentOperation, NoteCell } from "@/lib/notebook/document";

export interface NoteCellProps {
  cell: NoteCell;
  readOnly?: boolean;
  onOperation: (op: DocumentOperation) => void;
}

/** Markdown with $inline$ and $$display$$ math; rendered (sanitized) until the analyst edits it. */
export function NoteCellEditor({ cell, readOnly = false, onOperation }: NoteCellProps) {
  const [editing, setEditing] = useState(!readOnly && cell.markdown.trim() === "");
  const html = useRenderedNote(cell.markdown);
  // In a shared document the Markdown is a Y.Text: two people writing in one note merge.
  const shared = useSharedField(cell.id, "markdown");

  if (editing && !readOnly) {
    const field = {
      className: "min-h-24 w-full resize-y rounded border border-line bg-paper px-2 py-1.5 font-mono text-sm text-ink outline-none focus:border-action",
      "aria-label": "Note (Markdown, $math$)",
      placeholder: "Assumptions, sources, sign conventions… Math: $\\omega = \\sqrt{g/l}$",
      onKeyDown: (event: KeyboardEvent<HTMLTextAreaElement>) => {
        if (event.key === "Escape" || (event.key === "Enter" && (event.ctrlKey || event.metaKey))) {
          event.preventDefault();
          setEditing(false);
        }
      },
    };
    return (
      <div className="flex flex-col gap-2">
        {shared ? (
          <SharedTextarea {...field} text={shared.text} origin={shared.origin} />
        ) : (
          <textarea {...field} value={cell.markdown} onChange={(event) => onOperation({ type: "setNote", cellId: cell.id, markdown: event.target.value })} />
        )}
        <div className="flex justify-end">
          <button type="button" className="rounded px-2 py-1 text-[13px] text-action hover:bg-action-soft" onClick={() => setEditing(false)}>
            Done <kbd>Ctrl+Enter</kbd>
          </button>
        </div>
      </div>
    );
  }

  return (
    <div className="flex items-start gap-2">
      {html === null ? (
        <p className="hn-note min-w-0 flex-1 whitespace-pre-wrap text-sm text-ink">{cell.markdown}</p>
      ) : (
        // Sanitized by DOMPurify in renderNoteHtml.
        <div className="hn-note min-w-0 flex-1 text-sm text-ink" data-testid="note-rendered" dangerouslySetInnerHTML={{ __html: html }} />
      )}
      {!readOnly && (
        <button type="button" className="shrink-0 rounded px-2 py-1 text-[13px] text-action hover:bg-action-soft" onClick={() => setEditing(true)}>
          Edit
        </button>
      )}
    </div>
  );
}

/**
 * Renders after mount: sanitizing needs the browser's DOM, and server and first
 * client render must agree. The Markdown and sanitizer code loads on demand, so
 * notebooks without notes do not pay for it on first load.
 */
function useRenderedNote(markdown: string): string | null {
  const [html, setHtml] = useState<string | null>(null);
  useEffect(() => {
    let current = true;
    void import("./markdown").then(({ renderNoteHtml }) => {
      if (current) setHtml(renderNoteHtml(markdown));
    });
    return () => {
      current = false;
    };
  }, [markdown]);
  return html;
}
