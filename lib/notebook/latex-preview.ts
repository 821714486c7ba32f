/**
 * FALLBACK LaTeX for the live preview under the expression editors, used until
 * the engine's lib/mechanics/latex.ts is available to the notebook. It renders
 * the parse tree as written (no simplification) with the engine's naming rules
 * from DESIGN.md: q' as \dot{q}, q'' as \ddot{q}, trailing digits as
 * subscripts, Greek names as Greek letters. Depends only on the parser, so it
 * is safe in the browser bundle. Replace the call sites with the engine's
 * `toLatex` once it lands and delete this file.
 */
import type { Expr } from "../mechanics/expr/ast";
import { parseExpression } from "../mechanics/expr/parse";

const GREEK = new Set([
  "alpha", "beta", "gamma", "delta", "epsilon", "zeta", "eta", "theta", "iota", "kappa", "lambda", "mu", "nu", "xi",
  "rho", "sigma", "tau", "upsilon", "phi", "chi", "psi", "omega",
  "Gamma", "Delta", "Theta", "Lambda", "Xi", "Sigma", "Upsilon", "Phi", "Psi", "Omega",
]);

/** `theta1` → `\theta_{1}`, `m_load` → `m_{\mathrm{load}}`; other multi-letter names are set upright. */
export function symbolLatex(name: string, order: 0 | 1 | 2 = 0): string {
  const match = /^([A-Za-z]+?)(_?)([0-9]+)$/.exec(name) ?? /^([A-Za-z]+)_([A-Za-z0-9]+)$/.exec(name);
  let base = match ? match[1]! : name;
  const subscript = match ? match[match.length - 1]! : "";
  base = GREEK.has(base) ? `\\${base}` : base.length > 1 ? `\\mathrm{${base.replace(/_/g, "\\_")}}` : base;
  const core = order === 2 ? `\\ddot{${base}}` : order === 1 ? `\\dot{${base}}` : base;
  if (subscript === "") return core;
  return `${core}_{${/^[0-9]+$/.test(subscript) ? subscript : `\\mathrm{${subscript}}`}}`;
}

const FUNCTION_LATEX: Record<string, string> = {
  sin: "\\sin", cos: "\\cos", tan: "\\tan", exp: "\\exp", log: "\\ln", sinh: "\\sinh", cosh: "\\cosh", tanh: "\\tanh",
  asin: "\\arcsin", acos: "\\arccos", atan: "\\arctan",
};

function numberLatex(value: number): string {
  const text = String(value);
  const exponent = /^(-?[\d.]+)e([+-]?\d+)$/.exec(text);
  return exponent ? `${exponent[1]}\\times 10^{${Number(exponent[2])}}` : text;
}

// Precedence: sum 1, product 2, unary minus 3, power 4, atom 5.
function precedence(expr: Expr): number {
  if (expr.kind === "bin") return expr.op === "+" || expr.op === "-" ? 1 : expr.op === "^" ? 4 : 2;
  if (expr.kind === "neg") return 3;
  return 5;
}

function wrap(text: string, needed: boolean): string {
  return needed ? `\\left(${text}\\right)` : text;
}

function render(expr: Expr): string {
  switch (expr.kind) {
    case "num":
      return numberLatex(expr.value);
    case "pi":
      return "\\pi";
    case "sym":
      return symbolLatex(expr.name, expr.order);
    case "neg":
      return `-${wrap(render(expr.arg), precedence(expr.arg) < 2)}`;
    case "call":
      if (expr.fn === "sqrt") return `\\sqrt{${render(expr.arg)}}`;
      if (expr.fn === "abs") return `\\left|${render(expr.arg)}\\right|`;
      return `${FUNCTION_LATEX[expr.fn]}\\left(${render(expr.arg)}\\right)`;
    case "bin": {
      const { op, left, right } = expr;
      if (op === "/") return `\\frac{${render(left)}}{${render(right)}}`;
      if (op === "^") {
        // sin(x)^2 reads better as \sin^{2}(x).
        if (left.kind === "call" && left.fn in FUNCTION_LATEX && right.kind === "num" && right.value > 0) {
          return `${FUNCTION_LATEX[left.fn]}^{${render(right)}}\\left(${render(left.arg)}\\right)`;
        }
        return `${wrap(render(left), precedence(left) <= 4 || left.kind === "call")}^{${render(right)}}`;
      }
      if (op === "*") {
        const l = wrap(render(left), precedence(left) < 2);
        const r = wrap(render(right), precedence(right) < 3);
        // A number on the right of a product needs a visible sign: 2·3, x·2.
        const explicit = right.kind === "num" || (right.kind === "bin" && right.op === "^" && right.left.kind === "num") || right.kind === "neg";
        return `${l}${explicit ? " \\cdot " : "\\,"}${r}`;
      }
      const r = render(right);
      const rightNeedsParens = op === "-" ? precedence(right) <= 1 : precedence(right) < 1;
      const rightText = wrap(r, rightNeedsParens || (op === "+" && right.kind === "neg"));
      return `${render(left)} ${op} ${rightText}`;
    }
  }
}

/** LaTeX for a parse tree. */
export function exprToLatex(expr: Expr): string {
  return render(expr);
}

/** LaTeX for expression text, or null when it does not parse (the editor shows why). */
export function previewLatex(text: string): string | null {
  if (text.trim() === "") return null;
  try {
    return render(parseExpression(text));
  } catch {
    return null;
  }
}
