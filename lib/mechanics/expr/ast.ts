/**
 * The expression tree of Holonomy's expression language (see DESIGN.md):
 * identifiers with optional primes (`q`, `q'`, `q''`), numbers, `+ - * / ^`,
 * parentheses, a whitelist of functions, the constant `pi` and the time `t`.
 *
 * Every node carries the half-open character range [start, end) of the text it
 * came from (0-based), so that diagnostics can point at a column.
 */

export const FUNCTION_NAMES = ["sin", "cos", "tan", "exp", "log", "sqrt", "abs", "sinh", "cosh", "tanh", "asin", "acos", "atan"] as const;

export type FunctionName = (typeof FUNCTION_NAMES)[number];

export const BINARY_OPERATORS = ["+", "-", "*", "/", "^"] as const;
export type BinaryOperator = (typeof BINARY_OPERATORS)[number];

interface Span {
  start: number;
  end: number;
}

/** A numeric literal such as `2`, `0.5` or `1e-3`. */
export interface NumberNode extends Span {
  kind: "num";
  value: number;
}

/**
 * An identifier with its derivative order: `q` (0), `q'` (1, the rate),
 * `q''` (2, the acceleration). The time is the identifier `t`.
 */
export interface SymbolNode extends Span {
  kind: "sym";
  name: string;
  order: 0 | 1 | 2;
}

/** The constant π, written `pi`. */
export interface PiNode extends Span {
  kind: "pi";
}

export interface NegateNode extends Span {
  kind: "neg";
  arg: Expr;
}

export interface BinaryNode extends Span {
  kind: "bin";
  op: BinaryOperator;
  left: Expr;
  right: Expr;
}

export interface CallNode extends Span {
  kind: "call";
  fn: FunctionName;
  arg: Expr;
}

export type Expr = NumberNode | SymbolNode | PiNode | NegateNode | BinaryNode | CallNode;

/** The reserved name of the time variable. */
export const TIME = "t";
/** The reserved name of the constant π. */
export const PI = "pi";

/** Names a user may not give to a coordinate, parameter, input or definition. */
export const RESERVED_NAMES: ReadonlySet<string> = new Set<string>([TIME, PI, "e", ...FUNCTION_NAMES]);

/** Calls `visit` on every node of the tree, parents before children. */
export function walk(expr: Expr, visit: (node: Expr) => void): void {
  visit(expr);
  switch (expr.kind) {
    case "neg":
    case "call":
      walk(expr.arg, visit);
      break;
    case "bin":
      walk(expr.left, visit);
      walk(expr.right, visit);
      break;
    default:
      break;
  }
}

/** The identifiers a tree refers to, with the highest derivative order seen for each. */
export function symbolsOf(expr: Expr): Map<string, 0 | 1 | 2> {
  const found = new Map<string, 0 | 1 | 2>();
  walk(expr, (node) => {
    if (node.kind === "sym") {
      const seen = found.get(node.name);
      if (seen === undefined || node.order > seen) found.set(node.name, node.order);
    }
  });
  return found;
}
