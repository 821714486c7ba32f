/**
 * A comment's anchor on one term of a generated equation. The engine gives each
 * top-level term of an equation an id from its canonical text (lib/mechanics
 * `toLatexTerms`: equal terms, equal ids); with the equations cell and the
 * coordinate it becomes a key that stays the same as long as that term is in
 * that equation. After an edit a thread finds its term again by the key, or is
 * outdated: the term is no longer there, and the thread shows the term as it
 * read on the revision it was written on.
 */

export interface TermAddress {
  cellId: string;
  coordinate: string;
  /** The engine's term id within the equation (base-36 hash, "-2" for a repeat). */
  termId: string;
}

/** A term of the current results, addressable by comments. */
export interface LiveTerm extends TermAddress {
  key: string;
  /** The term in the input syntax, "-" first when the equation subtracts it. */
  text: string;
  /** The term's LaTeX without its sign. */
  latex: string;
}

export const TERM_ID_PATTERN = /^[0-9a-z]{1,8}(?:-\d{1,4})?$/;

/**
 * The stable key of a term: cell, coordinate and the term's id.
 *
 * @example termKey({ cellId: "eqs", coordinate: "theta", termId: "1k3x9a" }) // "eqs/theta/1k3x9a"
 */
export function termKey({ cellId, coordinate, termId }: TermAddress): string {
  return `${cellId}/${coordinate}/${termId}`;
}

/** The address a key names (the cell id may itself contain "/"; coordinate and term id never do). */
export function parseTermKey(key: string): TermAddress | null {
  const parts = key.split("/");
  if (parts.length < 3) return null;
  const termId = parts.pop()!;
  const coordinate = parts.pop()!;
  const cellId = parts.join("/");
  if (!cellId || !coordinate || !TERM_ID_PATTERN.test(termId)) return null;
  return { cellId, coordinate, termId };
}

interface EquationWithTerms {
  coordinate: string;
  terms?: readonly { id: string; text: string; latex: string }[];
}

/** Every term of the results' equations as shown in equations cell `cellId`. */
export function liveTermsOf(equations: readonly EquationWithTerms[] | undefined, cellId: string): LiveTerm[] {
  return (equations ?? []).flatMap((equation) =>
    (equation.terms ?? []).map((term) => {
      const address = { cellId, coordinate: equation.coordinate, termId: term.id };
      return { ...address, key: termKey(address), text: term.text, latex: term.latex };
    }),
  );
}

export type TermThreadState = { state: "attached"; term: LiveTerm } | { state: "outdated" } | { state: "unknown" };

/**
 * Whether a term thread's term is still in the current results: attached to the
 * same key, outdated when the results no longer have it, unknown while there are
 * no current results (not evaluated yet, or evaluating).
 */
export function termThreadState(key: string, live: ReadonlyMap<string, LiveTerm> | null): TermThreadState {
  if (!live) return { state: "unknown" };
  const term = live.get(key);
  return term ? { state: "attached", term } : { state: "outdated" };
}
