"use client";

import { useComments } from "./comments-context";

export function SpeechMark({ className = "h-3.5 w-3.5" }: { className?: string }) {
  return (
    <svg aria-hidden viewBox="0 0 16 16" className={className} fill="none" stroke="currentColor" strokeWidth="1.5">
      <path d="M2.5 3.5h11v7h-6l-3 2.5v-2.5h-2z" strokeLinejoin="round" />
    </svg>
  );
}

/** The number of open threads on a cell, in its header margin; opens the panel on them. */
export function CellCommentCount({ cellId }: { cellId: string }) {
  const comments = useComments();
  const count = comments?.cellCounts.get(cellId) ?? 0;
  if (!comments || count === 0) return null;
  return (
    <button
      type="button"
      className="inline-flex items-center gap-1 rounded-full border border-review/50 bg-review-soft px-1.5 text-xs font-medium text-review hover:border-review"
      aria-label={`${count} open comment thread${count === 1 ? "" : "s"} on this cell`}
      title="Show this cell's comments"
      data-testid="cell-comment-count"
      onClick={() => comments.showCell(cellId)}
    >
      <SpeechMark />
      {count}
    </button>
  );
}
