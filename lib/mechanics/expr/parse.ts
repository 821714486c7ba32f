import { ExpressionError } from "../errors";
import { FUNCTION_NAMES, type BinaryOperator, type Expr, type FunctionName } from "./ast";
import { GREEK_LETTER_NAMES, greekAdvice } from "./greek";

/**
 * Limits applied before any symbolic work, so that untrusted text cannot make
 * the engine spend unbounded time or memory.
 */
export interface ParseLimits {
  /** Longest accepted expression text, in characters. */
  maxLength: number;
  /** Deepest accepted nesting of parentheses, calls and operators. */
  maxDepth: number;
  /** Largest magnitude of a literal exponent (`x^200` is refused). */
  maxExponent: number;
}

export const DEFAULT_PARSE_LIMITS: ParseLimits = { maxLength: 8000, maxDepth: 60, maxExponent: 32 };

/**
 * Parse limits for expression text the engine produced and got back (mass
 * matrices and forcing of long chains run to many thousand characters). User
 * text keeps the defaults; the worker pool bounds the size of everything it accepts.
 */
export const DERIVED_EXPRESSION_LIMITS: ParseLimits = { ...DEFAULT_PARSE_LIMITS, maxLength: 2_000_000, maxDepth: 200 };

/** An expression as text in the input syntax or as its tree. */
export type ExpressionSource = string | Expr;

/**
 * The tree of an expression: a tree as it is, text parsed (once, where it
 * enters) with the limits for derived expressions.
 */
export function expressionTree(source: ExpressionSource, limits: ParseLimits = DERIVED_EXPRESSION_LIMITS): Expr {
  return typeof source === "string" ? parseExpression(source, limits) : source;
}

const FUNCTIONS: ReadonlySet<string> = new Set(FUNCTION_NAMES);

// Sticky patterns match at lastIndex without copying the rest of the text,
// which keeps tokenizing linear in the length of long engine-produced residuals.
const NUMBER = /(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?/y;
const NAME = /[A-Za-z_][A-Za-z0-9_]*/y;

type Token =
  | { type: "num"; value: number; start: number; end: number }
  | { type: "id"; name: string; primes: number; start: number; end: number }
  | { type: "op"; op: BinaryOperator; start: number; end: number }
  | { type: "lparen"; start: number; end: number }
  | { type: "rparen"; start: number; end: number }
  | { type: "end"; start: number; end: number };

function describe(token: Token, text: string): string {
  return token.type === "end" ? "the end of the expression" : `"${text.slice(token.start, token.end)}"`;
}

function tokenize(text: string): Token[] {
  const tokens: Token[] = [];
  let i = 0;
  while (i < text.length) {
    const ch = text[i]!;
    if (ch === " " || ch === "\t" || ch === "\n" || ch === "\r") {
      i++;
      continue;
    }
    const start = i;
    if (/[0-9.]/.test(ch)) {
      NUMBER.lastIndex = i;
      const match = NUMBER.exec(text);
      if (!match) throw new ExpressionError("parse", `malformed number`, start);
      i += match[0].length;
      if (i < text.length && /[A-Za-z_]/.test(text[i]!)) {
        throw new ExpressionError("parse", `missing operator between "${match[0]}" and "${text[i]}" (write 2*x, not 2x)`, i);
      }
      tokens.push({ type: "num", value: Number(match[0]), start, end: i });
      continue;
    }
    if (/[A-Za-z_]/.test(ch)) {
      NAME.lastIndex = i;
      const match = NAME.exec(text)!;
      i += match[0].length;
      let primes = 0;
      while (text[i] === "'") {
        primes++;
        i++;
      }
      if (primes > 2) throw new ExpressionError("parse", `at most two primes are allowed (q'' is the acceleration)`, start, i - start);
      tokens.push({ type: "id", name: match[0], primes, start, end: i });
      continue;
    }
    if (ch === "+" || ch === "-" || ch === "*" || ch === "/" || ch === "^") {
      i++;
      if (ch === "*" && text[i] === "*") {
        throw new ExpressionError("parse", `use ^ for powers, not **`, start, 2);
      }
      tokens.push({ type: "op", op: ch, start, end: i });
      continue;
    }
    if (ch === "(") {
      tokens.push({ type: "lparen", start, end: ++i });
      continue;
    }
    if (ch === ")") {
      tokens.push({ type: "rparen", start, end: ++i });
      continue;
    }
    if (ch === "'") throw new ExpressionError("parse", `a prime must follow a name (write q', not (q)')`, start);
    if (GREEK_LETTER_NAMES[ch]) throw new ExpressionError("parse", `unexpected character "${ch}": ${greekAdvice(ch)}`, start);
    throw new ExpressionError("parse", `unexpected character "${ch}"`, start);
  }
  tokens.push({ type: "end", start: text.length, end: text.length });
  return tokens;
}

/**
 * Parses one expression of Holonomy's expression language into a tree.
 * Throws `ExpressionError` with the position of the first problem.
 *
 * @example parseExpression("1/2*m*(l*theta')^2")
 */
export function parseExpression(text: string, limits: ParseLimits = DEFAULT_PARSE_LIMITS): Expr {
  if (text.length > limits.maxLength) {
    throw new ExpressionError("limit", `expression is longer than ${limits.maxLength} characters`, limits.maxLength);
  }
  const tokens = tokenize(text);
  let index = 0;
  let depth = 0;

  const peek = (): Token => tokens[index]!;
  const next = (): Token => tokens[index++]!;

  const enter = (at: number) => {
    depth++;
    if (depth > limits.maxDepth) throw new ExpressionError("limit", `expression is nested deeper than ${limits.maxDepth} levels`, at);
  };

  // sum := product (("+" | "-") product)*
  function parseSum(): Expr {
    let left = parseProduct();
    for (;;) {
      const token = peek();
      if (token.type === "op" && (token.op === "+" || token.op === "-")) {
        next();
        const right = parseProduct();
        left = { kind: "bin", op: token.op, left, right, start: left.start, end: right.end };
      } else return left;
    }
  }

  // product := unary (("*" | "/") unary)*
  function parseProduct(): Expr {
    let left = parseUnary();
    for (;;) {
      const token = peek();
      if (token.type === "op" && (token.op === "*" || token.op === "/")) {
        next();
        const right = parseUnary();
        left = { kind: "bin", op: token.op, left, right, start: left.start, end: right.end };
      } else if (token.type === "num" || token.type === "id" || token.type === "lparen") {
        throw new ExpressionError("parse", `missing operator before ${describe(token, text)}`, token.start, token.end - token.start);
      } else return left;
    }
  }

  // unary := ("-" | "+") unary | power   — so -x^2 is -(x^2)
  function parseUnary(): Expr {
    const token = peek();
    if (token.type === "op" && (token.op === "-" || token.op === "+")) {
      next();
      enter(token.start);
      const arg = parseUnary();
      depth--;
      return token.op === "-" ? { kind: "neg", arg, start: token.start, end: arg.end } : arg;
    }
    return parsePower();
  }

  // power := atom ("^" unary)?   — right-associative: a^b^c is a^(b^c)
  function parsePower(): Expr {
    const base = parseAtom();
    const token = peek();
    if (token.type === "op" && token.op === "^") {
      next();
      enter(token.start);
      const exponent = parseUnary();
      depth--;
      const literal = exponent.kind === "num" ? exponent.value : exponent.kind === "neg" && exponent.arg.kind === "num" ? -exponent.arg.value : null;
      if (literal !== null && Math.abs(literal) > limits.maxExponent) {
        throw new ExpressionError("limit", `exponent ${literal} is larger than ${limits.maxExponent}`, exponent.start, exponent.end - exponent.start);
      }
      return { kind: "bin", op: "^", left: base, right: exponent, start: base.start, end: exponent.end };
    }
    return base;
  }

  function parseAtom(): Expr {
    const token = next();
    switch (token.type) {
      case "num":
        if (!Number.isFinite(token.value)) throw new ExpressionError("parse", `number is too large`, token.start, token.end - token.start);
        return { kind: "num", value: token.value, start: token.start, end: token.end };
      case "id": {
        if (FUNCTIONS.has(token.name)) {
          if (token.primes > 0) throw new ExpressionError("parse", `"${token.name}" is a function and has no rate`, token.start, token.end - token.start);
          const open = next();
          if (open.type !== "lparen") {
            throw new ExpressionError("parse", `"${token.name}" is a function: write ${token.name}(...)`, open.start, Math.max(1, open.end - open.start));
          }
          enter(open.start);
          const arg = parseSum();
          depth--;
          const close = next();
          if (close.type !== "rparen") throw new ExpressionError("parse", `expected ")" but found ${describe(close, text)}`, close.start);
          return { kind: "call", fn: token.name as FunctionName, arg, start: token.start, end: close.end };
        }
        if (token.name === "pi") {
          if (token.primes > 0) throw new ExpressionError("parse", `pi is a constant and has no rate`, token.start, token.end - token.start);
          return { kind: "pi", start: token.start, end: token.end };
        }
        if (peek().type === "lparen") {
          throw new ExpressionError("unsupported", `unknown function "${token.name}"`, token.start, token.end - token.start);
        }
        return { kind: "sym", name: token.name, order: token.primes as 0 | 1 | 2, start: token.start, end: token.end };
      }
      case "lparen": {
        enter(token.start);
        const inner = parseSum();
        depth--;
        const close = next();
        if (close.type !== "rparen") throw new ExpressionError("parse", `expected ")" to close the "(" at column ${token.start + 1}`, close.start);
        return { ...inner, start: token.start, end: close.end };
      }
      case "end":
        throw new ExpressionError("parse", text.trim() === "" ? `expression is empty` : `expression ends too early`, token.start);
      default:
        throw new ExpressionError("parse", `unexpected ${describe(token, text)}`, token.start, token.end - token.start);
    }
  }

  const tree = parseSum();
  const rest = peek();
  if (rest.type !== "end") {
    throw new ExpressionError("parse", rest.type === "rparen" ? `unmatched ")"` : `unexpected ${describe(rest, text)}`, rest.start, rest.end - rest.start);
  }
  return tree;
}

/**
 * Writes a tree back in the input syntax with the fewest parentheses that keep
 * its meaning, so `parseExpression(formatExpression(e))` gives the same tree.
 */
export function formatExpression(expr: Expr): string {
  return format(expr, 0);
}

const PRECEDENCE: Record<BinaryOperator, number> = { "+": 1, "-": 1, "*": 2, "/": 2, "^": 4 };

function format(expr: Expr, parent: number): string {
  switch (expr.kind) {
    case "num":
      return formatNumber(expr.value);
    case "sym":
      return expr.name + "'".repeat(expr.order);
    case "pi":
      return "pi";
    case "call":
      return `${expr.fn}(${format(expr.arg, 0)})`;
    case "neg": {
      const text = `-${format(expr.arg, 3)}`;
      return parent >= 2 ? `(${text})` : text;
    }
    case "bin": {
      const p = PRECEDENCE[expr.op];
      // Left-associative operators need parentheses on a right operand of equal precedence;
      // ^ is right-associative, so it needs them on the left.
      // The parser reads `-a*b` as (−a)·b: a negated left factor needs no parentheses.
      const leadingMinus = expr.left.kind === "neg" && (expr.op === "*" || expr.op === "/");
      const left = leadingMinus ? format(expr.left, 0) : format(expr.left, expr.op === "^" ? p + 1 : p);
      const right = format(expr.right, expr.op === "^" ? 3 : p + 1);
      const text = `${left}${p === 1 ? ` ${expr.op} ` : expr.op}${right}`;
      return p < parent ? `(${text})` : text;
    }
  }
}

export function formatNumber(value: number): string {
  if (Number.isInteger(value) && Math.abs(value) < 1e21) return String(value);
  const text = String(value);
  return text.includes("e") ? text.replace("e+", "e") : text;
}
