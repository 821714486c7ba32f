import type { Expr } from "./expr/ast";
import { formatExpression, formatNumber, parseExpression } from "./expr/parse";
import { topLevelTerms } from "./terms";
import { DERIVED_EXPRESSION_LIMITS } from "./compile";

/**
 * LaTeX for expressions of the input syntax, rendered from the tree: q' as
 * \dot{q}, q'' as \ddot{q}, trailing digits and `_suffix` as subscripts, greek
 * names as greek letters, fractions for division, and only the parentheses
 * the tree needs. Output is checked to render with KaTeX.
 */

const GREEK = new Set([
  "alpha",
  "beta",
  "gamma",
  "delta",
  "epsilon",
  "zeta",
  "eta",
  "theta",
  "iota",
  "kappa",
  "lambda",
  "mu",
  "nu",
  "xi",
  "omicron",
  "pi",
  "rho",
  "sigma",
  "tau",
  "upsilon",
  "phi",
  "chi",
  "psi",
  "omega",
]);
/** Capital greek letters LaTeX has commands for; the others look like latin capitals. */
const GREEK_CAPITAL = new Set(["Gamma", "Delta", "Theta", "Lambda", "Xi", "Pi", "Sigma", "Upsilon", "Phi", "Psi", "Omega"]);
const GREEK_LATIN_CAPITAL: Record<string, string> = {
  Alpha: "A",
  Beta: "B",
  Epsilon: "E",
  Zeta: "Z",
  Eta: "H",
  Iota: "I",
  Kappa: "K",
  Mu: "M",
  Nu: "N",
  Omicron: "O",
  Rho: "P",
  Tau: "T",
  Chi: "X",
};

const FUNCTION_LATEX: Record<string, string> = {
  sin: "\\sin",
  cos: "\\cos",
  tan: "\\tan",
  exp: "\\exp",
  log: "\\ln",
  sinh: "\\sinh",
  cosh: "\\cosh",
  tanh: "\\tanh",
  asin: "\\arcsin",
  acos: "\\arccos",
  atan: "\\arctan",
};

/** A name part (no digits, no underscore) as a letter or an upright word. */
function word(part: string): string {
  if (GREEK.has(part)) return `\\${part}`;
  if (GREEK_CAPITAL.has(part)) return `\\${part}`;
  if (GREEK_LATIN_CAPITAL[part]) return `\\mathrm{${GREEK_LATIN_CAPITAL[part]}}`;
  if (part.length === 1) return part;
  return `\\mathit{${part}}`;
}

/** A subscript part: digits as they are, a greek name as its letter, anything else upright. */
function subscriptPart(part: string): string {
  if (/^\d+$/.test(part)) return part;
  if (GREEK.has(part) || GREEK_CAPITAL.has(part)) return `\\${part}`;
  if (part.length === 1) return part;
  return `\\mathrm{${part.replace(/_/g, "\\_")}}`;
}

/**
 * LaTeX for one identifier with its derivative order.
 *
 * @example symbolLatex("theta1", 1) // "\\dot{\\theta}_{1}"
 */
export function symbolLatex(name: string, order: 0 | 1 | 2 = 0): string {
  const [head, ...rest] = name.split("_");
  const subscripts: string[] = [];
  let base = head!;
  const digits = /^(.*?[A-Za-z])(\d+)$/.exec(base);
  if (digits) {
    base = digits[1]!;
    subscripts.push(digits[2]!);
  }
  if (base === "") base = name;
  const restText = rest.filter((r) => r !== "").join("_");
  if (restText !== "") subscripts.push(subscriptPart(restText));
  let latex = word(base);
  if (order === 1) latex = `\\dot{${latex}}`;
  if (order === 2) latex = `\\ddot{${latex}}`;
  return subscripts.length > 0 ? `${latex}_{${subscripts.join(",")}}` : latex;
}

function numberLatex(value: number): string {
  const text = formatNumber(value);
  const match = /^([0-9.]+)e([+-]?\d+)$/.exec(text);
  if (!match) return text;
  const exponent = match[2]!.replace(/^\+/, "");
  return match[1] === "1" ? `10^{${exponent}}` : `${match[1]} \\times 10^{${exponent}}`;
}

interface Factors {
  negative: boolean;
  numerator: Expr[];
  denominator: Expr[];
}

/** Flattens a chain of *, / and unary minus into signed numerator and denominator factors. */
function collectFactors(e: Expr, into: Factors, inDenominator: boolean): void {
  if (e.kind === "neg") {
    into.negative = !into.negative;
    collectFactors(e.arg, into, inDenominator);
  } else if (e.kind === "bin" && e.op === "*") {
    collectFactors(e.left, into, inDenominator);
    collectFactors(e.right, into, inDenominator);
  } else if (e.kind === "bin" && e.op === "/") {
    collectFactors(e.left, into, inDenominator);
    collectFactors(e.right, into, !inDenominator);
  } else {
    (inDenominator ? into.denominator : into.numerator).push(e);
  }
}

/** Renders a whole expression (a sum at the top). */
function renderSum(e: Expr): string {
  const terms = topLevelTerms(e);
  return joinTerms(terms.map(({ sign, term }) => signed(sign, renderProduct(term))));
}

function signed(sign: 1 | -1, product: { negative: boolean; latex: string }): { negative: boolean; latex: string } {
  return { negative: product.negative !== (sign === -1), latex: product.latex };
}

function joinTerms(terms: { negative: boolean; latex: string }[]): string {
  return terms.map((t, i) => (i === 0 ? (t.negative ? `-${t.latex}` : t.latex) : `${t.negative ? " - " : " + "}${t.latex}`)).join("");
}

/** Renders a product or quotient, returning its sign separately. */
function renderProduct(e: Expr): { negative: boolean; latex: string } {
  const factors: Factors = { negative: false, numerator: [], denominator: [] };
  collectFactors(e, factors, false);
  const isNumber = (f: Expr) => f.kind === "num";
  const isOne = (f: Expr) => f.kind === "num" && f.value === 1;
  const denominator = factors.denominator.filter((f) => !isOne(f));
  const numbers = factors.numerator.filter(isNumber);
  const others = factors.numerator.filter((f) => !isNumber(f));
  let latex: string;
  if (denominator.length > 0 && denominator.every(isNumber) && others.length > 0) {
    // 1/2*m*v^2 reads best as \frac{1}{2} m v^2.
    const coefficient = numbers.filter((f) => !isOne(f));
    latex = `\\frac{${coefficient.length === 0 ? "1" : joinFactors(coefficient)}}{${joinFactors(denominator)}}\\,${joinFactors(others)}`;
  } else {
    // A multiplicative 1 next to other factors says nothing.
    const numerator = factors.numerator.length > 1 ? factors.numerator.filter((f) => !isOne(f)) : factors.numerator;
    latex = denominator.length === 0 ? joinFactors(numerator) : `\\frac{${fractionPart(numerator)}}{${fractionPart(denominator)}}`;
  }
  return { negative: factors.negative, latex };
}

/** A numerator or denominator: a lone sum needs no parentheses there. */
function fractionPart(factors: Expr[]): string {
  if (factors.length === 1 && factors[0]!.kind === "bin" && (factors[0]!.op === "+" || factors[0]!.op === "-")) return renderSum(factors[0]!);
  return factors.length === 0 ? "1" : joinFactors(factors);
}

function joinFactors(factors: Expr[]): string {
  let out = "";
  factors.forEach((f, i) => {
    const latex = renderFactor(f);
    if (i > 0) out += /^[0-9.]/.test(latex) ? " \\cdot " : "\\,";
    out += latex;
  });
  return out === "" ? "1" : out;
}

const paren = (latex: string) => `\\left(${latex}\\right)`;

/** Renders one factor of a product, in parentheses if it is a sum or signed. */
function renderFactor(e: Expr): string {
  switch (e.kind) {
    case "num":
      return numberLatex(e.value);
    case "pi":
      return "\\pi";
    case "sym":
      return symbolLatex(e.name, e.order);
    case "call":
      return renderCall(e.fn, e.arg);
    case "neg":
      return paren(renderSum(e));
    case "bin":
      if (e.op === "^") return renderPower(e.left, e.right);
      if (e.op === "*" || e.op === "/") {
        const product = renderProduct(e);
        return product.negative ? paren(`-${product.latex}`) : product.latex;
      }
      return paren(renderSum(e));
  }
}

function renderCall(fn: string, arg: Expr, power?: string): string {
  const inner = renderSum(arg);
  if (fn === "sqrt") return power ? `\\left(\\sqrt{${inner}}\\right)^{${power}}` : `\\sqrt{${inner}}`;
  if (fn === "abs") return power ? `\\left|${inner}\\right|^{${power}}` : `\\left|${inner}\\right|`;
  const name = FUNCTION_LATEX[fn]!;
  return `${name}${power ? `^{${power}}` : ""}${paren(inner)}`;
}

function renderPower(base: Expr, exponent: Expr): string {
  const power = renderSum(exponent);
  if (base.kind === "call" && base.fn !== "exp") return renderCall(base.fn, base.arg, power);
  const atomic = base.kind === "sym" || base.kind === "pi" || (base.kind === "num" && /^\d+$/.test(formatNumber(base.value)));
  const b = atomic
    ? renderFactor(base)
    : paren(base.kind === "bin" && (base.op === "+" || base.op === "-") ? renderSum(base) : renderFactor(base).replace(/^\\left\((.*)\\right\)$/, "$1"));
  return `${b}^{${power}}`;
}

/**
 * LaTeX for an expression in the input syntax (or its tree).
 *
 * @example toLatex("1/2*m1*(l1*theta1')^2") // "\\frac{1}{2}\\,m_{1}\\,\\left(l_{1}\\,\\dot{\\theta}_{1}\\right)^{2}"
 */
export function toLatex(text: string | Expr): string {
  return renderSum(typeof text === "string" ? parseExpression(text, DERIVED_EXPRESSION_LIMITS) : text);
}

export interface LatexTerm {
  /** Stable id from the term's text with its sign normalised (base-36 FNV-1a). */
  id: string;
  /** The term in the input syntax, with a leading "-" when the sum subtracts it. */
  text: string;
  /** The term's LaTeX without the sign. */
  latex: string;
}

/**
 * LaTeX with each top-level term wrapped in \htmlData{term=ID}{…}, so the
 * notebook can attach comments and hover highlights to one term. KaTeX must
 * be run with trust limited to \htmlData.
 *
 * @example toLatexTerms("m*x'' + k*x").terms.map((t) => t.text) // ["m*x''", "k*x"]
 */
export function toLatexTerms(text: string | Expr): { latex: string; terms: LatexTerm[] } {
  const tree = typeof text === "string" ? parseExpression(text, DERIVED_EXPRESSION_LIMITS) : text;
  const seen = new Map<string, number>();
  const rendered = topLevelTerms(tree).map(({ sign, term }) => {
    const product = signed(sign, renderProduct(term));
    const termText = `${product.negative ? "-" : ""}${formatExpression(stripSigns(term))}`;
    const base = termId(termText);
    const count = (seen.get(base) ?? 0) + 1;
    seen.set(base, count);
    const id = count === 1 ? base : `${base}-${count}`;
    return { id, text: termText, negative: product.negative, latex: product.latex };
  });
  const latex = joinTerms(rendered.map((t) => ({ negative: t.negative, latex: `\\htmlData{term=${t.id}}{${t.latex}}` })));
  return { latex, terms: rendered.map(({ id, text: termText, latex: termLatex }) => ({ id, text: termText, latex: termLatex })) };
}

/**
 * The LaTeX of a sum from its terms as toLatexTerms gives them, without the
 * term marks: for documents outside the notebook, from stored results.
 *
 * @example joinLatexTerms(toLatexTerms("m*x'' - F").terms) // "m\\,\\ddot{x} - F"
 */
export function joinLatexTerms(terms: readonly Pick<LatexTerm, "text" | "latex">[]): string {
  return joinTerms(terms.map((t) => ({ negative: t.text.startsWith("-"), latex: t.latex })));
}

/** Removes the negations of a product's factors (their parity is the term's sign). */
function stripSigns(e: Expr): Expr {
  if (e.kind === "neg") return stripSigns(e.arg);
  if (e.kind === "bin" && (e.op === "*" || e.op === "/")) return { ...e, left: stripSigns(e.left), right: stripSigns(e.right) };
  return e;
}

/** FNV-1a (32-bit) of a term's text, in base 36. */
export function termId(text: string): string {
  let hash = 0x811c9dc5;
  for (let i = 0; i < text.length; i++) {
    hash ^= text.charCodeAt(i);
    hash = Math.imul(hash, 0x01000193) >>> 0;
  }
  return hash.toString(36);
}
