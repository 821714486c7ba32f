import type { Expr, FunctionName } from "./expr/ast";

/**
 * Exact partial derivatives on the expression tree, for numeric work
 * (Jacobians for linearization, equilibria and code export). The result is a
 * new tree; it is not simplified beyond dropping obvious zeros and ones, since
 * it is only ever evaluated (compile.ts) or exported (codegen/), where the
 * hash-consed graph shares repeated subexpressions.
 *
 * The variable is one identifier with its derivative order: `q` (0), `q'` (1)
 * or `q''` (2); the time is `t`. Every other identifier is held constant, so
 * this is the partial derivative, not the total time derivative.
 *
 * @example formatExpression(differentiate(parseExpression("m*l^2*sin(q)"), "q")) // "m*l^2*cos(q)"
 */
export function differentiate(expr: Expr, name: string, order: 0 | 1 | 2 = 0): Expr {
  const d = (e: Expr): Expr => {
    switch (e.kind) {
      case "num":
      case "pi":
        return ZERO;
      case "sym":
        return e.name === name && e.order === order ? ONE : ZERO;
      case "neg":
        return neg(d(e.arg));
      case "bin": {
        const { left, right } = e;
        switch (e.op) {
          case "+":
            return add(d(left), d(right));
          case "-":
            return sub(d(left), d(right));
          case "*":
            return add(mul(d(left), right), mul(left, d(right)));
          case "/": {
            // (u/v)' = u'/v − u v'/v²
            const dl = d(left);
            const dr = d(right);
            return sub(div(dl, right), div(mul(left, dr), pow(right, num(2))));
          }
          case "^": {
            const dl = d(left);
            if (!dependsOn(right, name, order)) {
              // (u^c)' = c u^(c−1) u'
              const exponent = constantValue(right);
              const lowered = exponent !== null ? num(exponent - 1) : sub(right, ONE);
              return mul(mul(right, pow(left, lowered)), dl);
            }
            // (u^v)' = u^v (v' ln u + v u'/u)
            return mul(e, add(mul(d(right), call("log", left)), div(mul(right, dl), left)));
          }
        }
        break;
      }
      case "call":
        return mul(callDerivative(e.fn, e.arg), d(e.arg));
    }
    throw new Error(`unreachable: ${(e as Expr).kind}`);
  };
  return d(expr);
}

/** d fn(u)/du, as a tree in u. */
function callDerivative(fn: FunctionName, u: Expr): Expr {
  switch (fn) {
    case "sin":
      return call("cos", u);
    case "cos":
      return neg(call("sin", u));
    case "tan":
      return div(ONE, pow(call("cos", u), num(2)));
    case "exp":
      return call("exp", u);
    case "log":
      return div(ONE, u);
    case "sqrt":
      return div(ONE, mul(num(2), call("sqrt", u)));
    case "abs":
      // sign(u), undefined at u = 0 like the derivative itself
      return div(call("abs", u), u);
    case "sinh":
      return call("cosh", u);
    case "cosh":
      return call("sinh", u);
    case "tanh":
      return sub(ONE, pow(call("tanh", u), num(2)));
    case "asin":
      return div(ONE, call("sqrt", sub(ONE, pow(u, num(2)))));
    case "acos":
      return neg(div(ONE, call("sqrt", sub(ONE, pow(u, num(2))))));
    case "atan":
      return div(ONE, add(ONE, pow(u, num(2))));
  }
}

/** Whether `expr` mentions the identifier `name` with derivative order `order`. */
export function dependsOn(expr: Expr, name: string, order: 0 | 1 | 2 = 0): boolean {
  switch (expr.kind) {
    case "num":
    case "pi":
      return false;
    case "sym":
      return expr.name === name && expr.order === order;
    case "neg":
    case "call":
      return dependsOn(expr.arg, name, order);
    case "bin":
      return dependsOn(expr.left, name, order) || dependsOn(expr.right, name, order);
  }
}

/** The value of a tree made only of numbers, π, signs and arithmetic, or null. */
export function constantValue(expr: Expr): number | null {
  switch (expr.kind) {
    case "num":
      return expr.value;
    case "pi":
      return Math.PI;
    case "neg": {
      const v = constantValue(expr.arg);
      return v === null ? null : -v;
    }
    case "bin": {
      const a = constantValue(expr.left);
      if (a === null) return null;
      const b = constantValue(expr.right);
      if (b === null) return null;
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
      break;
    }
    default:
      return null;
  }
  return null;
}

// Tree builders that drop the zeros and ones differentiation produces.
// Nodes they create carry an empty span: they come from no user text.

const num = (value: number): Expr =>
  value < 0 ? { kind: "neg", arg: { kind: "num", value: -value, start: 0, end: 0 }, start: 0, end: 0 } : { kind: "num", value, start: 0, end: 0 };
const ZERO: Expr = num(0);
const ONE: Expr = num(1);
const isNum = (e: Expr, value: number) => e.kind === "num" && e.value === value;
const call = (fn: FunctionName, arg: Expr): Expr => ({ kind: "call", fn, arg, start: 0, end: 0 });
const bin = (op: "+" | "-" | "*" | "/" | "^", left: Expr, right: Expr): Expr => ({ kind: "bin", op, left, right, start: 0, end: 0 });

function neg(a: Expr): Expr {
  if (isNum(a, 0)) return ZERO;
  if (a.kind === "neg") return a.arg;
  return { kind: "neg", arg: a, start: 0, end: 0 };
}
function add(a: Expr, b: Expr): Expr {
  if (isNum(a, 0)) return b;
  if (isNum(b, 0)) return a;
  if (b.kind === "neg") return bin("-", a, b.arg);
  return bin("+", a, b);
}
function sub(a: Expr, b: Expr): Expr {
  if (isNum(b, 0)) return a;
  if (isNum(a, 0)) return neg(b);
  if (b.kind === "neg") return bin("+", a, b.arg);
  return bin("-", a, b);
}
function mul(a: Expr, b: Expr): Expr {
  if (isNum(a, 0) || isNum(b, 0)) return ZERO;
  if (isNum(a, 1)) return b;
  if (isNum(b, 1)) return a;
  if (a.kind === "neg") return neg(mul(a.arg, b));
  if (b.kind === "neg") return neg(mul(a, b.arg));
  return bin("*", a, b);
}
function div(a: Expr, b: Expr): Expr {
  if (isNum(a, 0)) return ZERO;
  if (isNum(b, 1)) return a;
  if (a.kind === "neg") return neg(div(a.arg, b));
  return bin("/", a, b);
}
function pow(a: Expr, b: Expr): Expr {
  if (isNum(b, 0)) return ONE;
  if (isNum(b, 1)) return a;
  return bin("^", a, b);
}
