import type { BinaryOperator, Expr, FunctionName } from "./ast";

/**
 * Builders for trees the engine writes itself (canonical and display forms).
 * Nodes carry an empty span: they come from no user text. Products and
 * quotients are nested to the left, exactly as the parser nests `a*b*c/d`,
 * so a built tree prints (formatExpression) without extra parentheses.
 */

export const num = (value: number): Expr => ({ kind: "num", value, start: 0, end: 0 });
export const sym = (name: string, order: 0 | 1 | 2 = 0): Expr => ({ kind: "sym", name, order, start: 0, end: 0 });
export const pi = (): Expr => ({ kind: "pi", start: 0, end: 0 });
export const call = (fn: FunctionName, arg: Expr): Expr => ({ kind: "call", fn, arg, start: 0, end: 0 });
export const bin = (op: BinaryOperator, left: Expr, right: Expr): Expr => ({ kind: "bin", op, left, right, start: 0, end: 0 });
export const neg = (arg: Expr): Expr => ({ kind: "neg", arg, start: 0, end: 0 });

/** a·b with b's own product or quotient chain spliced in, so `2` times `omega*t` is `2*omega*t`. */
export function times(a: Expr, b: Expr): Expr {
  if (b.kind === "bin" && b.op === "*") return bin("*", times(a, b.left), b.right);
  if (b.kind === "bin" && b.op === "/") return bin("/", times(a, b.left), b.right);
  return bin("*", a, b);
}

/** The left-nested product of factors; `1` for none. */
export function product(factors: readonly Expr[]): Expr {
  if (factors.length === 0) return num(1);
  let out = factors[0]!;
  for (let i = 1; i < factors.length; i++) out = times(out, factors[i]!);
  return out;
}

/**
 * A product with its sign put on its first factor (`-m*g*l`, parsed as
 * (−m)·g·l), which is how a leading minus reads and prints.
 */
export function negateFirst(e: Expr): Expr {
  if (e.kind === "bin" && (e.op === "*" || e.op === "/")) return bin(e.op, negateFirst(e.left), e.right);
  if (e.kind === "neg") return e.arg;
  return neg(e);
}

/**
 * The left-nested sum of signed terms: `a - b + c`. A negative first term
 * carries its sign on its first factor.
 *
 * @example formatExpression(sum([{ negative: true, term: sym("a") }, { negative: false, term: sym("b") }])) // "-a + b"
 */
export function sum(terms: readonly { negative: boolean; term: Expr }[]): Expr {
  if (terms.length === 0) return num(0);
  let out = terms[0]!.negative ? negateFirst(terms[0]!.term) : terms[0]!.term;
  for (let i = 1; i < terms.length; i++) out = bin(terms[i]!.negative ? "-" : "+", out, terms[i]!.term);
  return out;
}
