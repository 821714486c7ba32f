import { diffLines, diffWordsWithSpace } from "diff";

/**
 * Line diffs of two texts for the revision comparison, with the changed words
 * of a replaced line marked, as a reviewer reads a patch. Pure and client-safe.
 */

export interface DiffPart {
  text: string;
  /** Whether this stretch of the line is common to both, or only in this side. */
  changed: boolean;
}

export type DiffLine =
  | { kind: "same"; text: string }
  /** `parts` when the line replaces (or is replaced by) one on the other side: the words that differ are `changed`. */
  | { kind: "added" | "removed"; text: string; parts?: DiffPart[] };

/** Texts longer than this are compared line by line only (no word marks inside long replaced blocks). */
const WORD_DIFF_MAX_LINE = 4000;

function splitLines(value: string): string[] {
  const lines = value.split("\n");
  // diffLines keeps each line's newline; the last element after it is empty.
  if (lines.length > 1 && lines.at(-1) === "") lines.pop();
  return lines;
}

function withFinalNewline(text: string): string {
  return text === "" || text.endsWith("\n") ? text : `${text}\n`;
}

function wordParts(before: string, after: string): { removed: DiffPart[]; added: DiffPart[] } {
  const removed: DiffPart[] = [];
  const added: DiffPart[] = [];
  for (const change of diffWordsWithSpace(before, after)) {
    if (!change.added) removed.push({ text: change.value, changed: change.removed });
    if (!change.removed) added.push({ text: change.value, changed: change.added });
  }
  return { removed, added };
}

/**
 * The lines of `after` against `before`: unchanged lines, removed lines, then
 * the lines that replace them. A removed line paired with an added one carries
 * the words that changed.
 *
 * @example textDiff("T = m*v^2", "T = 1/2*m*v^2") // removed + added, with "1/2*" marked in the added line
 */
export function textDiff(before: string, after: string): DiffLine[] {
  if (before === after) return splitLines(after).map((text) => ({ kind: "same", text }));
  const out: DiffLine[] = [];
  // Every line ends in a newline, so a last line that gains a successor is not reported as changed.
  const changes = diffLines(withFinalNewline(before), withFinalNewline(after));
  for (let i = 0; i < changes.length; i++) {
    const change = changes[i]!;
    if (!change.added && !change.removed) {
      for (const text of splitLines(change.value)) out.push({ kind: "same", text });
      continue;
    }
    if (change.removed && changes[i + 1]?.added) {
      const oldLines = splitLines(change.value);
      const newLines = splitLines(changes[i + 1]!.value);
      const paired = Math.min(oldLines.length, newLines.length);
      const removedOut: DiffLine[] = [];
      const addedOut: DiffLine[] = [];
      oldLines.forEach((text, k) => {
        const other = newLines[k];
        if (k < paired && other !== undefined && text.length <= WORD_DIFF_MAX_LINE && other.length <= WORD_DIFF_MAX_LINE) {
          const parts = wordParts(text, other);
          removedOut.push({ kind: "removed", text, parts: parts.removed });
          addedOut.push({ kind: "added", text: other, parts: parts.added });
        } else {
          removedOut.push({ kind: "removed", text });
          if (other !== undefined && k < paired) addedOut.push({ kind: "added", text: other });
        }
      });
      for (const text of newLines.slice(oldLines.length)) addedOut.push({ kind: "added", text });
      out.push(...removedOut, ...addedOut);
      i += 1;
      continue;
    }
    for (const text of splitLines(change.value)) out.push({ kind: change.added ? "added" : "removed", text });
  }
  return out;
}

/** How many lines were added and removed. */
export function diffCounts(lines: readonly DiffLine[]): { added: number; removed: number } {
  let added = 0;
  let removed = 0;
  for (const line of lines) {
    if (line.kind === "added") added += 1;
    else if (line.kind === "removed") removed += 1;
  }
  return { added, removed };
}
