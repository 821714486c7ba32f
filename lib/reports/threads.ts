/**
 * The comment threads of a derivation as the report prints them: open ones
 * first, then resolved ones, each with where it is anchored (the cell and
 * field with the quoted text, or the term of an equation) and every comment.
 * Threads live on the derivation, not on a revision: the report prints them
 * as they stand when it is made. Pure; mentions are printed as "@Name".
 */
import { withPlainMentions } from "@/lib/comments/mentions";
import type { ThreadView } from "@/lib/comments/views";
import { CELL_LABELS, type DerivationDocument } from "@/lib/notebook/document";

export interface ReportThread {
  id: string;
  status: "open" | "resolved";
  startedBy: string;
  startedAt: string;
  resolved: { byName: string; at: string } | null;
  anchor: { kind: "text"; where: string; quote: string } | { kind: "term"; where: string; termText: string; termLatex: string };
  /** Written on revision N (exactly its content, or edits after it). */
  writtenOn: string | null;
  comments: { authorName: string; createdAt: string; edited: boolean; body: string; deleted: boolean }[];
}

const FORMER_MEMBER = "a former member";

/** "Definitions, row x1, expr": the cell (by its title or kind) and the field inside it. */
export function anchorPlace(document: DerivationDocument, cellId: string, fieldPath: string): string {
  const cell = document.cells.find((candidate) => candidate.id === cellId);
  if (!cell) return "a cell since removed";
  const label = cell.title?.trim() || CELL_LABELS[cell.kind];
  const parts = fieldPath.split("/");
  if (parts.length !== 3) return fieldPath && fieldPath !== "expr" && fieldPath !== "markdown" ? `${label}, ${fieldPath}` : label;
  const [array, key, field] = parts as [string, string, string];
  const items = (cell as unknown as Record<string, unknown>)[array];
  const item = Array.isArray(items) ? (items as Record<string, unknown>[]).find((entry) => entry.id === key || entry.coordinate === key) : undefined;
  const itemName = typeof item?.name === "string" && item.name.trim() ? item.name.trim() : typeof item?.coordinate === "string" ? item.coordinate : null;
  return itemName === null ? `${label}, a row since removed` : `${label}, ${itemName}, ${field}`;
}

export function reportThreads(threads: readonly ThreadView[], document: DerivationDocument): ReportThread[] {
  const order = (thread: ThreadView) => (thread.status === "open" ? 0 : 1);
  return [...threads]
    .sort((a, b) => order(a) - order(b) || a.createdAt.localeCompare(b.createdAt))
    .map((thread) => ({
      id: thread.id,
      status: thread.status,
      startedBy: thread.authorName ?? FORMER_MEMBER,
      startedAt: thread.createdAt,
      resolved: thread.status === "resolved" && thread.resolvedAt ? { byName: thread.resolvedByName ?? FORMER_MEMBER, at: thread.resolvedAt } : null,
      anchor:
        thread.anchor.kind === "text"
          ? { kind: "text", where: anchorPlace(document, thread.anchor.cellId, thread.anchor.fieldPath), quote: thread.anchor.quote }
          : {
              kind: "term",
              where: `${anchorPlace(document, thread.anchor.cellId, "")}, equation of ${thread.anchor.coordinate}`,
              termText: thread.anchor.termText,
              termLatex: thread.anchor.termLatex,
            },
      writtenOn:
        thread.writtenOn.revisionNumber === null
          ? null
          : thread.writtenOn.sameAsRevision
            ? `revision ${thread.writtenOn.revisionNumber}`
            : `edits after revision ${thread.writtenOn.revisionNumber}`,
      comments: thread.comments.map((comment) => ({
        authorName: comment.authorName ?? FORMER_MEMBER,
        createdAt: comment.createdAt,
        edited: comment.editedAt !== null,
        body: comment.deleted ? "" : withPlainMentions(comment.body),
        deleted: comment.deleted,
      })),
    }));
}
