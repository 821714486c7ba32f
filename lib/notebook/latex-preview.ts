/**
 * The live rendering under the expression editors, from the engine's LaTeX
 * (lib/mechanics/latex.ts). That module depends only on the parser and a few
 * small engine files (no symbolic library), so it is safe in the browser
 * bundle; keep it that way when changing its imports.
 */
import { symbolLatex, toLatex } from "../mechanics/browser";

export { symbolLatex };

/** LaTeX for expression text, or null when it is blank or does not parse (the editor shows why). */
export function previewLatex(text: string): string | null {
  if (text.trim() === "") return null;
  try {
    return toLatex(text);
  } catch {
    return null;
  }
}
