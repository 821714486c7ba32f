import * as Y from "yjs";

/**
 * A comment's anchor in an editor field's text: Yjs relative positions of the
 * span's first character (assoc 0, so text typed just before the span stays
 * outside it) and of its last character (assoc −1, so text typed just after it
 * stays outside too), with the text quoted when the comment was written.
 * Relative positions name characters, not offsets, so the span follows
 * everyone's concurrent edits; when its characters are deleted it no longer
 * resolves and the thread is shown detached, with its quote.
 */
export interface TextAnchor {
  start: Uint8Array;
  end: Uint8Array;
  quote: string;
}

export type ResolvedTextAnchor = { state: "attached"; index: number; length: number; text: string } | { state: "detached"; reason: "missing" | "deleted" };

/** Longest quote kept with an anchor; the span itself may be longer. */
export const QUOTE_LIMIT = 500;

/**
 * The anchor of `text[index, index + length)`.
 *
 * @example createTextAnchor(ytext, 4, 3).quote // "m*g" for "L = m*g*h"
 */
export function createTextAnchor(text: Y.Text, index: number, length: number): TextAnchor {
  const total = text.length;
  if (!Number.isInteger(index) || !Number.isInteger(length) || index < 0 || length < 1 || index + length > total) {
    throw new RangeError(`The span ${index}+${length} is not inside a text of length ${total}.`);
  }
  const start = Y.createRelativePositionFromTypeIndex(text, index, 0);
  const end = Y.createRelativePositionFromTypeIndex(text, index + length, -1);
  return {
    start: Y.encodeRelativePosition(start),
    end: Y.encodeRelativePosition(end),
    quote: text
      .toString()
      .slice(index, index + length)
      .slice(0, QUOTE_LIMIT),
  };
}

/**
 * Where the anchor's span is now in `text` (the live Y.Text of the same field of
 * `doc`), or why it is detached: a position that does not resolve or resolves
 * into another type ("missing"), or a span whose characters are all gone ("deleted").
 */
export function resolveTextAnchor(doc: Y.Doc, text: Y.Text | null, anchor: Pick<TextAnchor, "start" | "end">): ResolvedTextAnchor {
  if (!text) return { state: "detached", reason: "missing" };
  let start: Y.AbsolutePosition | null;
  let end: Y.AbsolutePosition | null;
  try {
    start = Y.createAbsolutePositionFromRelativePosition(Y.decodeRelativePosition(anchor.start), doc);
    end = Y.createAbsolutePositionFromRelativePosition(Y.decodeRelativePosition(anchor.end), doc);
  } catch {
    // Bytes that are not a relative position (damaged or foreign) name nothing.
    return { state: "detached", reason: "missing" };
  }
  if (!start || !end || start.type !== text || end.type !== text) return { state: "detached", reason: "missing" };
  if (end.index <= start.index) return { state: "detached", reason: "deleted" };
  return { state: "attached", index: start.index, length: end.index - start.index, text: text.toString().slice(start.index, end.index) };
}
