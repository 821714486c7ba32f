import type { AccelerationsResult } from "./accelerations";
import type { ConstraintKind } from "./constraints";
import type { DerivationResult, DerivationTiming, HamiltonianResult } from "./derive";
import type { Expr } from "./expr/ast";
import { formatExpression } from "./expr/parse";
import { toLatex, toLatexTerms, type LatexTerm } from "./latex";
import { topLevelTerms } from "./terms";

/** An equation printed: the canonical residual as text, the display form as LaTeX, plain and with its terms marked. */
export interface PrintedEquation {
  coordinate: string;
  /** The canonical residual in the input syntax. */
  residual: string;
  /** LaTeX of the display form (without "= 0"). */
  latex: string;
  /** The same LaTeX with each top-level term wrapped in \htmlData{term=ID}{…} (see toLatexTerms). */
  termLatex: string;
  terms: LatexTerm[];
}

/**
 * A derivation printed where it leaves the engine: every expression as text
 * in the input syntax (canonical form, for computing and comparing) and the
 * expressions a reader looks at also as LaTeX (display form). This is what
 * the engine worker's `derive` task answers with and what the derivation CLI
 * prints from; a caller in the engine's own thread keeps the trees instead.
 */
export interface PrintedDerivation {
  coordinates: string[];
  equations: PrintedEquation[];
  massMatrix: string[][];
  forcing: string[];
  energy: string;
  /** LaTeX of M, f and h in display form. */
  latex: { massMatrix: string[][]; forcing: string[]; energy: string };
  momenta: { coordinate: string; expr: string }[];
  cyclic: string[];
  /** The momentum balance of each cyclic coordinate: p and dp/dt as text and as LaTeX of the display form. */
  cyclicMomenta: {
    coordinate: string;
    momentum: string;
    rate: string;
    latex: { momentum: string; rate: string };
    conserved: boolean;
    actedOnBy: ("applied force" | "dissipation" | "constraint")[];
  }[];
  freeCoordinates: string[];
  conserved: { name: string; expr: string; latex: string; reason: string }[];
  explicitTime: boolean;
  hamiltonian: { available: true; expr: string; momenta: { coordinate: string; symbol: string }[] } | { available: false; reason: string };
  /** q'' = expr (LaTeX of the right-hand side), or why there is no closed form. */
  accelerations: { coordinate: string; expr: string; latex: string }[] | { available: false; reason: string };
  /** Constraints with their multipliers (position first, then rate); empty without constraints. */
  constraints: PrintedConstraint[];
  /** The model's outputs, definitions expanded; empty without outputs. */
  outputs: PrintedOutput[];
  timing: DerivationTiming;
}

/** A constraint printed: see ConstraintResult. */
export interface PrintedConstraint {
  name: string;
  kind: ConstraintKind;
  /** `lambda_<name>` / `mu_<name>`, the symbol in the equations. */
  symbol: string;
  /** The constraint (= 0), canonical text. */
  expr: string;
  latex: string;
  /** Row of A, one per coordinate. */
  jacobian: string[];
  /** A q'' = bias, bias = −(Ȧ q' + ȧ₀). */
  bias: string;
  /** λ or μ in closed form, or null (then evaluate numerically: compileConstrainedSystem). */
  multiplier: string | null;
  multiplierLatex: string | null;
  reason?: string;
  /** Unit of the multiplier over base symbols. */
  unit: string;
}

export interface PrintedOutput {
  name: string;
  expr: string;
  latex: string;
  unit: string;
}

/**
 * Prints a derivation once: text with formatExpression, LaTeX with toLatex.
 *
 * @example printDerivation(deriveModel(model)).equations[0].residual // "m*l^2*theta'' + m*g*l*sin(theta)"
 */
export function printDerivation(result: DerivationResult): PrintedDerivation {
  const text = (e: Expr) => formatExpression(e);
  return {
    coordinates: result.coordinates,
    equations: result.equations.map((equation) => {
      const marked = toLatexTerms(equation.display);
      return {
        coordinate: equation.coordinate,
        residual: text(equation.residual),
        latex: toLatex(equation.display),
        termLatex: marked.latex,
        terms: marked.terms,
      };
    }),
    massMatrix: result.massMatrix.map((row) => row.map(text)),
    forcing: result.forcing.map(text),
    energy: text(result.energy),
    latex: {
      massMatrix: result.display.massMatrix.map((row) => row.map((e) => toLatex(e))),
      forcing: result.display.forcing.map((e) => toLatex(e)),
      energy: toLatex(result.display.energy),
    },
    momenta: result.momenta.map((p) => ({ coordinate: p.coordinate, expr: text(p.expr) })),
    cyclic: result.cyclic,
    cyclicMomenta: result.cyclicMomenta.map((c) => ({
      coordinate: c.coordinate,
      momentum: text(c.momentum),
      rate: text(c.rate),
      latex: { momentum: toLatex(c.display.momentum), rate: toLatex(c.display.rate) },
      conserved: c.conserved,
      actedOnBy: c.actedOnBy,
    })),
    freeCoordinates: result.freeCoordinates,
    conserved: result.conserved.map((q) => ({ name: q.name, expr: text(q.expr), latex: toLatex(q.display), reason: q.reason })),
    explicitTime: result.explicitTime,
    hamiltonian: printHamiltonian(result.hamiltonian),
    accelerations: printAccelerations(result.accelerations),
    constraints: result.constraints.map((c) => ({
      name: c.name,
      kind: c.kind,
      symbol: c.symbol,
      expr: text(c.expr),
      latex: toLatex(c.expr),
      jacobian: c.jacobian.map(text),
      bias: text(c.bias),
      multiplier: c.multiplier === null ? null : text(c.multiplier),
      multiplierLatex: c.display === null ? null : quotientLatex(c.display),
      ...(c.reason === undefined ? {} : { reason: c.reason }),
      unit: c.unit,
    })),
    outputs: result.outputs.map((o) => ({ name: o.name, expr: text(o.expr), latex: toLatex(o.display), unit: o.unit })),
    timing: result.timing,
  };
}

function printHamiltonian(h: HamiltonianResult): PrintedDerivation["hamiltonian"] {
  return h.available ? { available: true, expr: formatExpression(h.expr), momenta: h.momenta } : h;
}

function printAccelerations(a: AccelerationsResult): PrintedDerivation["accelerations"] {
  if (!Array.isArray(a)) return a;
  return a.map((solved) => ({ coordinate: solved.coordinate, expr: formatExpression(solved.expr), latex: quotientLatex(solved.display) }));
}

/** Numerators wider than this many symbols are written (1/D)·(N): about the width of a notebook column. */
const FRACTION_MAX_WIDTH = 48;

/**
 * N/D as \\frac{N}{D}, or for a wide N of several terms as
 * \\frac{1}{D}\\Bigl(N\\Bigr): a fraction bar cannot break over lines, the
 * terms inside fixed-size parentheses can (KaTeX breaks inline math after a
 * top-level + − = and at \\allowbreak).
 *
 * @example quotientLatex(parseExpression("(a*x' + b*y' + c*z' - d*sin(x) - e*cos(y)*u)/m")) // "\\frac{1}{m}\\Bigl(…\\Bigr)"
 */
export function quotientLatex(e: Expr): string {
  if (e.kind === "bin" && e.op === "/" && topLevelTerms(e.left).length > 2) {
    const numerator = toLatex(e.left);
    // \\allowbreak: the parentheses may start a line of their own.
    if (visibleWidth(numerator) > FRACTION_MAX_WIDTH) return `\\frac{1}{${toLatex(e.right)}}\\,\\allowbreak\\Bigl(${numerator}\\Bigr)`;
  }
  return toLatex(e);
}

/** Roughly how many symbols LaTeX shows: a function name counts its letters, any other command one, markup nothing. */
function visibleWidth(latex: string): number {
  return latex
    .replace(/\\(left|right|,|;|quad|qquad)/g, "")
    .replace(/\\(sin|cos|tan|exp|ln|sinh|cosh|tanh|arcsin|arccos|arctan)\b/g, "fun")
    .replace(/\\[A-Za-z]+/g, "x")
    .replace(/[{}^_\s]/g, "").length;
}
