/**
 * KaTeX rendering for the notebook. In LaTeX the engine wrote, only
 * `\htmlData{term=ID}` is trusted — it is how the engine marks each top-level
 * term of an equation so the interface can address it; every other
 * HTML-producing command (\href, \url, \includegraphics, \htmlClass, …) is
 * refused. LaTeX a person typed in a note is trusted with nothing.
 *
 * Loaded on demand (see MathView), so KaTeX is not part of the notebook's
 * first-load JavaScript.
 */
import katex from "katex";

const TERM_ID = /^[A-Za-z0-9_.:-]{1,96}$/;

/**
 * Allows `\htmlData` with a single `term` attribute holding a plain id, nothing
 * else. KaTeX reports the attribute with its `data-` prefix.
 */
export function trustTermData(context: { command: string; attributes?: Record<string, string> }): boolean {
  if (context.command !== "\\htmlData" || !context.attributes) return false;
  const entries = Object.entries(context.attributes);
  if (entries.length !== 1) return false;
  const [key, value] = entries[0]!;
  return key === "data-term" && TERM_ID.test(value);
}

/**
 * Macro expansions allowed for LaTeX the engine wrote (every `\,` counts, so a
 * long chain equation needs thousands) and for LaTeX an analyst typed in a note.
 */
export const ENGINE_MAX_EXPAND = 100_000;
export const NOTE_MAX_EXPAND = 1_000;

// The same LaTeX is rendered again whenever a notebook remounts; keep recent results.
const cache = new Map<string, string>();
const CACHE_LIMIT = 300;

/** Whose LaTeX it is: the engine's (term marks trusted) or a person's (nothing trusted). */
export type LatexSource = "engine" | "note";

/** HTML for a LaTeX string; a LaTeX error renders as the source in the error colour, never throws. */
export function renderLatex(latex: string, display = false, maxExpand = ENGINE_MAX_EXPAND, source: LatexSource = "engine"): string {
  const key = `${source}:${display ? "D" : "I"}${maxExpand}:${latex}`;
  const hit = cache.get(key);
  if (hit !== undefined) return hit;
  const html = katex.renderToString(latex, {
    displayMode: display,
    throwOnError: false,
    errorColor: "var(--danger, #b3261e)",
    trust: source === "engine" ? trustTermData : false,
    strict: "ignore",
    maxSize: 20,
    maxExpand,
    output: "htmlAndMathml",
  });
  if (cache.size >= CACHE_LIMIT) cache.delete(cache.keys().next().value!);
  cache.set(key, html);
  return html;
}
