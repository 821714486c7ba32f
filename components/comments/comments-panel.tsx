"use client";

/**
 * The side panel of comment threads: filters (mine, unresolved, outdated),
 * the threads of the derivation or of one cell, a thread opened in full, and
 * the box for a new thread on a term or on selected text. Viewers read only.
 */
import clsx from "clsx";
import { useEffect, useMemo, useRef, useState } from "react";
import { MathView } from "@/components/notebook/math";
import { useShortcut } from "@/components/shortcuts";
import { Button } from "@/components/ui/button";
import { CELL_LABELS, type CellKind } from "@/lib/notebook/document";
import { CommentBox } from "./comment-box";
import { useComments } from "./comments-context";
import { SpeechMark } from "./cell-comment-count";
import { anchorFromSelection, trackEditorFocus } from "./text-selection";
import { anchorIsOutdated, ThreadCard } from "./thread-card";
import { useCommentMutations } from "./use-comment-threads";

type Filter = "mine" | "unresolved" | "outdated";
const FILTER_LABELS: Record<Filter, string> = { mine: "Mine", unresolved: "Unresolved", outdated: "Outdated" };

/** The toolbar button that opens the panel, with the number of open threads. */
export function CommentsButton() {
  const comments = useComments();
  if (!comments) return null;
  const open = comments.answer?.threads.filter((thread) => thread.status === "open").length ?? 0;
  return (
    <Button
      size="sm"
      aria-expanded={comments.panelOpen}
      aria-controls="comments-panel"
      onClick={() => comments.setPanelOpen(!comments.panelOpen)}
      title="Comments (Alt+Shift+M)"
      data-testid="comments-button"
    >
      <SpeechMark />
      Comments{open > 0 ? ` (${open})` : ""}
    </Button>
  );
}

export function CommentsPanel() {
  const comments = useComments();
  const [filters, setFilters] = useState<Set<Filter>>(() => new Set<Filter>(["unresolved"]));
  const [selectionProblem, setSelectionProblem] = useState<string | null>(null);
  const panelRef = useRef<HTMLElement>(null);
  const mutations = useCommentMutations(comments?.derivationId ?? "");

  useEffect(() => trackEditorFocus(), []);
  useShortcut("Alt+Shift+M", "Open the comments", () => comments?.setPanelOpen(!comments.panelOpen));

  const answer = comments?.answer;
  const visible = useMemo(() => {
    if (!comments || !answer) return [];
    return answer.threads.filter((thread) => {
      if (comments.cellFilter) {
        const cellId = thread.anchor.kind === "term" ? thread.anchor.cellId : thread.anchor.cellId;
        if (cellId !== comments.cellFilter) return false;
      }
      if (filters.has("unresolved") && thread.status !== "open") return false;
      if (filters.has("outdated") && !anchorIsOutdated(comments.states.get(thread.id))) return false;
      if (filters.has("mine") && thread.authorId !== answer.userId && !thread.comments.some((comment) => comment.authorId === answer.userId)) return false;
      return true;
    });
  }, [answer, comments, filters]);

  useEffect(() => {
    if (comments?.panelOpen && comments.selectedThreadId) {
      panelRef.current?.querySelector(`[data-thread-id="${comments.selectedThreadId}"]`)?.scrollIntoView({ block: "nearest" });
    }
  }, [comments?.panelOpen, comments?.selectedThreadId]);

  if (!comments || !comments.panelOpen) return null;
  const { draft } = comments;
  const cellKind = comments.cellFilter ? comments.cells.find((cell) => cell.id === comments.cellFilter)?.kind : undefined;

  return (
    <aside
      id="comments-panel"
      ref={panelRef}
      aria-label="Comments"
      data-testid="comments-panel"
      className="fixed inset-y-0 right-0 z-40 flex w-full flex-col border-l border-line bg-paper shadow-xl sm:w-[26rem]"
      onKeyDown={(event) => {
        if (event.key === "Escape" && !event.defaultPrevented) comments.setPanelOpen(false);
      }}
    >
      <header className="flex items-center gap-2 border-b border-line px-3 py-2">
        <h2 className="flex-1 text-base font-semibold">Comments</h2>
        <button
          type="button"
          className="rounded px-2 text-lg text-muted hover:bg-sunken hover:text-ink"
          aria-label="Close comments"
          onClick={() => comments.setPanelOpen(false)}
        >
          ×
        </button>
      </header>
      <div className="space-y-2 border-b border-line px-3 py-2">
        <div className="flex flex-wrap items-center gap-1.5" role="group" aria-label="Filters">
          {(Object.keys(FILTER_LABELS) as Filter[]).map((filter) => (
            <button
              key={filter}
              type="button"
              aria-pressed={filters.has(filter)}
              className={clsx(
                "rounded-full border px-2.5 py-0.5 text-xs",
                filters.has(filter) ? "border-action bg-action-soft text-action" : "border-line text-muted hover:text-ink",
              )}
              onClick={() =>
                setFilters((current) => {
                  const next = new Set(current);
                  if (next.has(filter)) next.delete(filter);
                  else next.add(filter);
                  return next;
                })
              }
            >
              {FILTER_LABELS[filter]}
            </button>
          ))}
          {comments.cellFilter ? (
            <button
              type="button"
              className="rounded-full border border-review/60 bg-review-soft px-2.5 py-0.5 text-xs text-review"
              onClick={() => comments.showCell(null)}
            >
              {cellKind && cellKind in CELL_LABELS ? CELL_LABELS[cellKind as CellKind] : "One cell"} ×
            </button>
          ) : null}
        </div>
        {answer?.mayComment && !draft ? (
          <div className="space-y-1">
            <Button
              size="sm"
              onMouseDown={(event) => event.preventDefault()}
              onClick={() => {
                const result = anchorFromSelection(comments.ydoc);
                if ("problem" in result) setSelectionProblem(result.problem);
                else {
                  setSelectionProblem(null);
                  comments.setDraft(result.anchor);
                }
              }}
            >
              Comment on selected text
            </Button>
            <p className="text-xs text-muted">{selectionProblem ?? "Or click a term of the equations to discuss it."}</p>
          </div>
        ) : null}
        {answer && !answer.mayComment ? <p className="text-xs text-muted">Your role reads comments; leads, analysts and reviewers write them.</p> : null}
      </div>

      <div className="min-h-0 flex-1 space-y-3 overflow-y-auto px-3 py-3">
        {draft ? (
          <section className="space-y-2 rounded border border-action bg-surface px-3 py-2" aria-label="New thread" data-testid="new-thread">
            <p className="text-xs text-muted">
              New thread on{" "}
              {draft.kind === "term" ? (
                <>
                  a term of the equation for <span className="font-mono">{draft.coordinate}</span>
                </>
              ) : (
                "the selected text"
              )}
            </p>
            {draft.kind === "term" ? (
              <MathView latex={`${draft.termText.startsWith("-") ? "-" : ""}${draft.termLatex}`} label={`Term ${draft.termText}`} className="text-sm" />
            ) : (
              <blockquote className="border-l-2 border-review pl-2 font-mono text-xs break-all">{draft.quote}</blockquote>
            )}
            <CommentBox
              members={answer?.members ?? []}
              label="Comment"
              submitLabel="Comment"
              autoFocus
              busy={mutations.start.isPending}
              error={mutations.start.error?.message ?? null}
              onCancel={() => comments.setDraft(null)}
              onSubmit={(body) =>
                mutations.start.mutate(
                  { anchor: draft, body },
                  {
                    onSuccess: ({ thread }) => {
                      comments.setDraft(null);
                      comments.selectThread(thread.id);
                    },
                  },
                )
              }
            />
          </section>
        ) : null}
        {comments.loading ? <p className="text-sm text-muted">Loading comments…</p> : null}
        {comments.error ? (
          <p className="text-sm text-danger" role="alert">
            Comments could not be loaded: {comments.error.message}
          </p>
        ) : null}
        {answer && visible.length === 0 && !draft ? (
          <p className="text-sm text-muted" data-testid="no-threads">
            {answer.threads.length === 0 ? "No comments yet." : "No threads match these filters."}
          </p>
        ) : null}
        <ul className="space-y-2">
          {visible.map((thread) => (
            <ThreadCard
              key={thread.id}
              thread={thread}
              expanded={comments.selectedThreadId === thread.id}
              onToggle={() => comments.selectThread(comments.selectedThreadId === thread.id ? null : thread.id)}
            />
          ))}
        </ul>
      </div>
    </aside>
  );
}
