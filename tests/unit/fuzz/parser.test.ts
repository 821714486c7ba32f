import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { ExpressionError, formatExpression, parseExpression, type Expr } from "@/lib/mechanics";
import { adversarialExpression, anyText, describeThrown, extremeExpression, fuzzSettings, grammarExpression, timed } from "./support";

// The parser is the first thing untrusted text meets (cells, model files, the API):
// it must answer every text with a tree or an ExpressionError, quickly.
const PARSE_BUDGET_MS = 500;

/** The tree without its character ranges, for comparing a reparsed tree. */
function shape(expr: Expr): unknown {
  switch (expr.kind) {
    case "num":
      return expr.value;
    case "sym":
      return `${expr.name}${"'".repeat(expr.order)}`;
    case "pi":
      return "pi";
    case "neg":
      return ["neg", shape(expr.arg)];
    case "call":
      return [expr.fn, shape(expr.arg)];
    case "bin":
      return [expr.op, shape(expr.left), shape(expr.right)];
  }
}

function expectTreeOrExpressionError(text: string): Expr | null {
  const { ms, outcome } = timed(() => parseExpression(text));
  expect(ms, `parsing ${JSON.stringify(text.slice(0, 80))} took ${ms} ms`).toBeLessThan(PARSE_BUDGET_MS);
  if ("error" in outcome) {
    expect(outcome.error instanceof ExpressionError, describeThrown(outcome.error)).toBe(true);
    const error = outcome.error as ExpressionError;
    expect(error.message.length).toBeGreaterThan(0);
    // The position points into the text (or just past its end), so the editor can underline it.
    expect(error.position).toBeGreaterThanOrEqual(0);
    expect(error.position).toBeLessThanOrEqual(Math.max(text.length, 8000));
    return null;
  }
  return outcome.value;
}

describe("expression parser under fuzzing", () => {
  it("answers grammatical text with a tree that prints and parses back to the same tree", () => {
    fc.assert(
      fc.property(grammarExpression(), (text) => {
        const tree = expectTreeOrExpressionError(text);
        if (tree === null) return;
        const printed = formatExpression(tree);
        const again = expectTreeOrExpressionError(printed);
        expect(again, `reprinted ${printed}`).not.toBeNull();
        expect(shape(again!)).toEqual(shape(tree));
      }),
      fuzzSettings("parser, grammatical text", 300),
    );
  });

  it("answers adversarial text with a tree or an ExpressionError", () => {
    fc.assert(
      fc.property(adversarialExpression(), (text) => void expectTreeOrExpressionError(text)),
      fuzzSettings("parser, adversarial text", 300),
    );
  });

  it("answers arbitrary Unicode with a tree or an ExpressionError", () => {
    fc.assert(
      fc.property(anyText(), (text) => void expectTreeOrExpressionError(text)),
      fuzzSettings("parser, arbitrary text", 200),
    );
  });

  it("refuses deep nesting and overlong text with a limit error instead of overflowing the stack", () => {
    fc.assert(
      fc.property(extremeExpression(), (text) => void expectTreeOrExpressionError(text)),
      fuzzSettings("parser, extreme shapes", 40),
    );
  });
});
