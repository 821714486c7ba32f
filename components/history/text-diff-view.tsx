import clsx from "clsx";
import type { DiffLine } from "@/lib/history/text-diff";

const lineStyle: Record<DiffLine["kind"], string> = {
  same: "text-ink",
  added: "bg-action-soft text-ink",
  removed: "bg-danger-soft text-ink",
};

const gutter: Record<DiffLine["kind"], string> = { same: " ", added: "+", removed: "−" };
const spoken: Record<DiffLine["kind"], string> = { same: "", added: "Added: ", removed: "Removed: " };

/**
 * A unified line diff: removed lines (−, red tint) before the lines that replace
 * them (+, teal tint), the words that changed marked within. Long lines wrap
 * inside the block rather than widen the page.
 */
export function TextDiffView({ lines, label }: { lines: readonly DiffLine[]; label: string }) {
  if (lines.length === 0) return <p className="px-3 py-2 text-sm text-muted">Empty.</p>;
  return (
    <div className="overflow-hidden font-mono text-[13px] leading-relaxed" role="group" aria-label={label} data-testid="text-diff">
      {lines.map((line, index) => (
        <div key={index} className={clsx("flex gap-2 px-2", lineStyle[line.kind])} data-change={line.kind}>
          <span
            aria-hidden
            className={clsx(
              "w-3 shrink-0 select-none text-center",
              line.kind === "added" ? "text-action" : line.kind === "removed" ? "text-danger" : "text-muted",
            )}
          >
            {gutter[line.kind]}
          </span>
          <span className="min-w-0 flex-1 break-words whitespace-pre-wrap">
            {spoken[line.kind] ? <span className="sr-only">{spoken[line.kind]}</span> : null}
            {line.kind !== "same" && line.parts
              ? line.parts.map((part, k) =>
                  part.changed ? (
                    line.kind === "added" ? (
                      <ins key={k} className="rounded-sm bg-action/25 no-underline" data-testid="changed-words">
                        {part.text}
                      </ins>
                    ) : (
                      <del key={k} className="rounded-sm bg-danger/25" data-testid="changed-words">
                        {part.text}
                      </del>
                    )
                  ) : (
                    <span key={k}>{part.text}</span>
                  ),
                )
              : line.text || " "}
          </span>
        </div>
      ))}
    </div>
  );
}
