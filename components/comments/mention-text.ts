import { mentionToken, mentionsIn, type Mention } from "@/lib/comments/mentions";

/**
 * The comment box shows mentions as "@Name"; what is stored is @[Name](id).
 * These convert between the two, given the members picked from the autocomplete.
 */

/** Stored body → text for the box, with the mentions it holds. */
export function toEditable(body: string): { text: string; picked: Mention[] } {
  const picked = mentionsIn(body);
  let text = body;
  for (const mention of picked) text = text.split(mentionToken(mention)).join(`@${mention.name}`);
  return { text, picked };
}

/** Text of the box → body to store: each "@Name" of a picked member becomes their mention. */
export function fromEditable(text: string, picked: readonly Mention[]): string {
  // Longest names first, so "@Ada Brandt-Lenz" is not taken for "@Ada Brandt".
  const ordered = [...new Map(picked.map((mention) => [mention.userId, mention])).values()].sort((a, b) => b.name.length - a.name.length);
  let body = text;
  ordered.forEach((mention, index) => {
    body = body.split(`@${mention.name}`).join(`\u0000${index}\u0000`);
  });
  ordered.forEach((mention, index) => {
    body = body.split(`\u0000${index}\u0000`).join(mentionToken(mention));
  });
  return body;
}

/** The partial mention being typed just before the caret ("@Ad" → "Ad"), or null. */
export function mentionQueryAt(text: string, caret: number): { start: number; query: string } | null {
  const match = /(^|\s)@([^\s@]{0,40})$/.exec(text.slice(0, caret));
  if (!match) return null;
  return { start: caret - match[2]!.length - 1, query: match[2]! };
}
