// Test-only helpers: a seeded PRNG and a numeric evaluator over the parsed tree,
// independent of the canonical engine (it walks the parser's AST directly).
import type { Expr } from "@/lib/mechanics/expr/ast";
import { parseExpression } from "@/lib/mechanics/expr/parse";

/** The engine's seeded generator (mulberry32), so randomised tests are repeatable. */
export { seededRandom as mulberry32 } from "@/lib/mechanics/canonical/evaluate";

export function uniform(random: () => number, lo: number, hi: number): number {
  return lo + (hi - lo) * random();
}

/** Values by name; rates as `q'`, accelerations as `q''`. */
export type Env = Record<string, number>;

const FUNCTIONS: Record<string, (x: number) => number> = {
  sin: Math.sin,
  cos: Math.cos,
  tan: Math.tan,
  exp: Math.exp,
  log: Math.log,
  sqrt: Math.sqrt,
  abs: Math.abs,
  sinh: Math.sinh,
  cosh: Math.cosh,
  tanh: Math.tanh,
  asin: Math.asin,
  acos: Math.acos,
  atan: Math.atan,
};

export function evaluateTree(expr: Expr, env: Env): number {
  switch (expr.kind) {
    case "num":
      return expr.value;
    case "pi":
      return Math.PI;
    case "sym": {
      const key = expr.name + "'".repeat(expr.order);
      const value = env[key];
      if (value === undefined) throw new Error(`no value for ${key}`);
      return value;
    }
    case "neg":
      return -evaluateTree(expr.arg, env);
    case "call":
      return FUNCTIONS[expr.fn]!(evaluateTree(expr.arg, env));
    case "bin": {
      const a = evaluateTree(expr.left, env);
      const b = evaluateTree(expr.right, env);
      switch (expr.op) {
        case "+":
          return a + b;
        case "-":
          return a - b;
        case "*":
          return a * b;
        case "/":
          return a / b;
        case "^":
          return Math.pow(a, b);
      }
    }
  }
}

/** The value of an expression given as text or as a tree (the engine's results are trees). */
export function evaluate(source: string | Expr, env: Env): number {
  return evaluateTree(typeof source === "string" ? parseExpression(source) : source, env);
}

/** |a − b| ≤ tol·(1 + max(|a|, |b|)). */
export function close(a: number, b: number, tol = 1e-9): boolean {
  return Math.abs(a - b) <= tol * (1 + Math.max(Math.abs(a), Math.abs(b)));
}
