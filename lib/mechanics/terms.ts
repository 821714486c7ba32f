import type { Expr } from "./expr/ast";

export interface SignedTerm {
  /** +1 or −1: the sign the sum gives this term. */
  sign: 1 | -1;
  /** The term without that sign. */
  term: Expr;
}

/**
 * The top-level terms of a sum: `a - (b - c) + -d` gives +a, −b, +c, −d.
 * Leading negations are folded into the sign; a non-sum is one term.
 *
 * @example topLevelTerms(parseExpression("m*x'' - F")).map((t) => t.sign) // [1, -1]
 */
export function topLevelTerms(expr: Expr): SignedTerm[] {
  const terms: SignedTerm[] = [];
  const visit = (e: Expr, sign: 1 | -1) => {
    if (e.kind === "bin" && (e.op === "+" || e.op === "-")) {
      visit(e.left, sign);
      visit(e.right, e.op === "+" ? sign : (-sign as 1 | -1));
    } else if (e.kind === "neg") {
      visit(e.arg, -sign as 1 | -1);
    } else {
      terms.push({ sign, term: e });
    }
  };
  visit(expr, 1);
  return terms;
}
