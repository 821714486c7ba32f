import { formatExpression } from "../expr/parse";
import type { SymbolSpace } from "./space";
import type { Poly } from "./term";
import { orderedTerms, polyToExpr, termToExpr } from "./to-expr";

/**
 * Canonical sums as text in Holonomy's input syntax, printed from their trees
 * (to-expr.ts): for the text API (canonicalText) and for callers that hand
 * text on. The text parses back (parseExpression) to the same canonical sum.
 */
export function formatPoly(space: SymbolSpace, p: Poly): string {
  return formatExpression(polyToExpr(space, p));
}

/** The signed text of each term, in output order (see orderedTerms). */
export function formatTerms(space: SymbolSpace, p: Poly): string[] {
  return orderedTerms(space, p).map((t) => formatExpression(termToExpr(space, t)));
}
