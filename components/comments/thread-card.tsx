"use client";

import clsx from "clsx";
import { useState } from "react";
import { MathView } from "@/components/notebook/math";
import { Button } from "@/components/ui/button";
import { formatRecordTime } from "@/lib/history/format";
import type { ThreadView } from "@/lib/comments/views";
import { CELL_LABELS, type CellKind } from "@/lib/notebook/document";
import { CommentBody } from "./comment-body";
import { CommentBox } from "./comment-box";
import { useComments, type AnchorState } from "./comments-context";
import { useCommentMutations } from "./use-comment-threads";

function cellLabel(cells: readonly { id: string; kind: string }[], cellId: string): string {
  const kind = cells.find((cell) => cell.id === cellId)?.kind;
  return kind && kind in CELL_LABELS ? CELL_LABELS[kind as CellKind] : "A removed cell";
}

export function anchorIsOutdated(state: AnchorState | undefined): boolean {
  return state?.state === "outdated" || state?.state === "detached";
}

function AnchorLine({ thread, state }: { thread: ThreadView; state: AnchorState | undefined }) {
  const comments = useComments();
  const anchor = thread.anchor;
  const revision = thread.writtenOn.revisionNumber;
  const writtenOn =
    revision === null ? "before the first revision" : thread.writtenOn.sameAsRevision ? `on revision ${revision}` : `after revision ${revision}`;
  if (anchor.kind === "term") {
    const negative = anchor.termText.startsWith("-");
    return (
      <div className="space-y-1">
        <div className="flex flex-wrap items-center gap-2 text-xs text-muted">
          <span>
            Term of the equation for <span className="font-mono">{anchor.coordinate}</span>
          </span>
          {state?.state === "outdated" ? (
            <span className="rounded border border-seal/60 bg-seal-soft px-1.5 text-seal" data-testid="thread-outdated">
              Outdated: no longer in the equations; written {writtenOn}
            </span>
          ) : state?.state === "unknown" ? (
            <span>not checked against current results</span>
          ) : null}
        </div>
        <MathView
          latex={`${negative ? "-" : ""}${anchor.termLatex}`}
          label={`Term ${anchor.termText}`}
          className={clsx("text-sm", state?.state === "outdated" && "opacity-70")}
        />
      </div>
    );
  }
  return (
    <div className="space-y-1">
      <div className="flex flex-wrap items-center gap-2 text-xs text-muted">
        <span>Text in {cellLabel(comments?.cells ?? [], anchor.cellId)}</span>
        {state?.state === "detached" ? (
          <span className="rounded border border-seal/60 bg-seal-soft px-1.5 text-seal" data-testid="thread-detached">
            Detached: the text was deleted; written {writtenOn}
          </span>
        ) : null}
      </div>
      <blockquote
        className={clsx("border-l-2 border-review pl-2 font-mono text-xs break-all", state?.state === "detached" && "line-through decoration-muted/60")}
      >
        {anchor.quote}
      </blockquote>
      {state?.kind === "text" && state.state === "attached" && state.text !== anchor.quote ? (
        <p className="font-mono text-xs text-muted break-all">now reads: {state.text}</p>
      ) : null}
    </div>
  );
}

export function ThreadCard({ thread, expanded, onToggle }: { thread: ThreadView; expanded: boolean; onToggle: () => void }) {
  const context = useComments()!;
  const state = context.states.get(thread.id);
  const mutations = useCommentMutations(context.derivationId);
  const [editing, setEditing] = useState<string | null>(null);
  const members = context.answer?.members ?? [];
  const first = thread.comments[0];
  const replies = thread.comments.length - 1;
  const failure = (error: Error | null) => (error ? error.message : null);

  return (
    <li
      className={clsx("rounded border bg-surface", expanded ? "border-review" : "border-line", thread.status === "resolved" && "opacity-80")}
      data-testid="comment-thread"
      data-thread-id={thread.id}
      data-status={thread.status}
    >
      <button type="button" className="block w-full space-y-1.5 px-3 py-2 text-left" aria-expanded={expanded} onClick={onToggle}>
        <AnchorLine thread={thread} state={state} />
        {!expanded && first ? (
          <p className="line-clamp-2 text-sm">
            <span className="font-medium">{first.authorName ?? "Former member"}:</span>{" "}
            {first.deleted ? <em className="text-muted">deleted</em> : first.body.replace(/@\[([^\]]+)\]\([^)]+\)/g, "@$1")}
          </p>
        ) : null}
        <p className="text-xs text-muted">
          {thread.status === "resolved" ? `Resolved${thread.resolvedByName ? ` by ${thread.resolvedByName}` : ""} · ` : ""}
          {replies > 0 ? `${replies} repl${replies === 1 ? "y" : "ies"} · ` : ""}
          {formatRecordTime(thread.updatedAt)}
        </p>
      </button>
      {expanded ? (
        <div className="space-y-3 border-t border-line/70 px-3 py-2">
          <ol className="space-y-3">
            {thread.comments.map((comment) => (
              <li key={comment.id} className="space-y-1" data-testid="comment">
                <div className="flex flex-wrap items-baseline gap-x-2 text-xs text-muted">
                  <span className="font-medium text-ink">{comment.authorName ?? "Former member"}</span>
                  <span>{formatRecordTime(comment.createdAt)}</span>
                  {comment.editedAt && !comment.deleted ? <span>(edited)</span> : null}
                </div>
                {comment.deleted ? (
                  <p className="text-sm italic text-muted">Comment deleted.</p>
                ) : editing === comment.id ? (
                  <CommentBox
                    members={members}
                    label="Edit your comment"
                    submitLabel="Save"
                    initialBody={comment.body}
                    autoFocus
                    busy={mutations.edit.isPending}
                    error={failure(mutations.edit.error)}
                    onCancel={() => setEditing(null)}
                    onSubmit={(body) => mutations.edit.mutate({ threadId: thread.id, commentId: comment.id, body }, { onSuccess: () => setEditing(null) })}
                  />
                ) : (
                  <CommentBody body={comment.body} />
                )}
                {!comment.deleted && editing !== comment.id && (comment.mayEdit || comment.mayDelete) ? (
                  <div className="flex gap-3 text-xs">
                    {comment.mayEdit ? (
                      <button type="button" className="text-action hover:underline" onClick={() => setEditing(comment.id)}>
                        Edit
                      </button>
                    ) : null}
                    {comment.mayDelete ? (
                      <button
                        type="button"
                        className="text-danger hover:underline"
                        onClick={() => {
                          if (window.confirm("Delete this comment? The thread keeps a note that it was deleted."))
                            mutations.remove.mutate({ threadId: thread.id, commentId: comment.id });
                        }}
                      >
                        Delete
                      </button>
                    ) : null}
                  </div>
                ) : null}
              </li>
            ))}
          </ol>
          {thread.mayReply ? (
            <CommentBox
              key={`reply-${thread.comments.length}`}
              members={members}
              label="Reply"
              submitLabel="Reply"
              busy={mutations.reply.isPending}
              error={failure(mutations.reply.error)}
              onSubmit={(body) => mutations.reply.mutate({ threadId: thread.id, body })}
            />
          ) : null}
          {thread.mayResolve ? (
            <Button
              size="sm"
              variant={thread.status === "open" ? "secondary" : "ghost"}
              disabled={mutations.setStatus.isPending}
              onClick={() => mutations.setStatus.mutate({ threadId: thread.id, status: thread.status === "open" ? "resolved" : "open" })}
            >
              {thread.status === "open" ? "Resolve" : "Reopen"}
            </Button>
          ) : null}
          {mutations.setStatus.error || mutations.remove.error ? (
            <p className="text-xs text-danger" role="alert">
              {(mutations.setStatus.error ?? mutations.remove.error)?.message}
            </p>
          ) : null}
        </div>
      ) : null}
    </li>
  );
}
