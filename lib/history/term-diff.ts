import { expressionTree, symbolLatex, toLatex, toLatexTerms, topLevelTerms, type Expr, type ExpressionSource, type LatexTerm } from "@/lib/mechanics";

/**
 * Equations of two revisions compared term by term, by the engine's canonical
 * terms (the top-level terms of each residual, with the ids the notebook uses).
 * A term with the same id on both sides is unchanged. Of the others, terms
 * multiplying the same motion — the same coordinates, rates, accelerations,
 * inputs and time, whatever the parameters and numbers in front — are one
 * changed term (a coefficient or a sign changed); the rest are added or removed.
 */

export interface TermView {
  id: string;
  /** The term in the input syntax, "-" first when the sum subtracts it. */
  text: string;
  /** The term's LaTeX with its sign. */
  latex: string;
}

export type TermChange =
  | { status: "unchanged" | "added" | "removed"; term: TermView }
  | {
      status: "changed";
      before: TermView[];
      after: TermView[];
      /** LaTeX of what the terms multiply (e.g. \ddot{\theta}), "1" for a constant term. */
      motionLatex: string;
    };

export interface EquationChange {
  coordinate: string;
  /** The coordinate as LaTeX (θ₁ for theta1). */
  coordinateLatex: string;
  status: "added" | "removed" | "changed" | "unchanged";
  terms: TermChange[];
  counts: { added: number; removed: number; changed: number; unchanged: number };
}

export interface ResidualEquation {
  coordinate: string;
  /** The engine's canonical residual: its tree, or its text as stored with an evaluation. */
  residual: ExpressionSource;
}

interface TermInfo {
  view: TermView;
  /** Canonical text of the motion factors: the grouping key of changed terms. */
  motion: string;
  motionExpr: Expr | null;
}

interface Factor {
  expr: Expr;
  inverse: boolean;
}

function factorsOf(expr: Expr, inverse: boolean, out: Factor[]): Factor[] {
  if (expr.kind === "bin" && expr.op === "*") {
    factorsOf(expr.left, inverse, out);
    factorsOf(expr.right, inverse, out);
  } else if (expr.kind === "bin" && expr.op === "/") {
    factorsOf(expr.left, inverse, out);
    factorsOf(expr.right, !inverse, out);
  } else if (expr.kind === "neg") {
    factorsOf(expr.arg, inverse, out);
  } else {
    out.push({ expr, inverse });
  }
  return out;
}

function mentions(expr: Expr, isMotion: (name: string) => boolean): boolean {
  switch (expr.kind) {
    case "sym":
      return isMotion(expr.name);
    case "neg":
    case "call":
      return mentions(expr.arg, isMotion);
    case "bin":
      return mentions(expr.left, isMotion) || mentions(expr.right, isMotion);
    default:
      return false;
  }
}

function canonicalKey(expr: Expr): string {
  switch (expr.kind) {
    case "num":
      return String(expr.value);
    case "pi":
      return "pi";
    case "sym":
      return `${expr.name}${"'".repeat(expr.order)}`;
    case "neg":
      return `-(${canonicalKey(expr.arg)})`;
    case "call":
      return `${expr.fn}(${canonicalKey(expr.arg)})`;
    case "bin":
      return `(${canonicalKey(expr.left)}${expr.op}${canonicalKey(expr.right)})`;
  }
}

const ONE: Expr = { kind: "num", value: 1, start: 0, end: 0 };

function product(factors: Factor[]): Expr | null {
  if (factors.length === 0) return null;
  const numerator = factors.filter((f) => !f.inverse).map((f) => f.expr);
  const denominator = factors.filter((f) => f.inverse).map((f) => f.expr);
  const multiply = (list: Expr[]) => list.reduce((left, right) => ({ kind: "bin", op: "*", left, right, start: 0, end: 0 }) as Expr);
  const top = numerator.length > 0 ? multiply(numerator) : ONE;
  return denominator.length > 0 ? { kind: "bin", op: "/", left: top, right: multiply(denominator), start: 0, end: 0 } : top;
}

function signedLatex(term: LatexTerm): string {
  return term.text.startsWith("-") ? `-${term.latex}` : term.latex;
}

/** The residual's terms with the motion each multiplies. */
export function termsOfResidual(residual: ExpressionSource, isMotion: (name: string) => boolean): TermInfo[] {
  const tree = expressionTree(residual);
  const { terms } = toLatexTerms(tree);
  const signed = topLevelTerms(tree);
  return terms.map((term, i) => {
    const motionFactors = factorsOf(signed[i]!.term, false, []).filter((factor) => mentions(factor.expr, isMotion));
    const key = motionFactors
      .map((factor) => `${factor.inverse ? "/" : "*"}${canonicalKey(factor.expr)}`)
      .sort()
      .join(" ");
    return { view: { id: term.id, text: term.text, latex: signedLatex(term) }, motion: key, motionExpr: product(motionFactors) };
  });
}

function countsOf(terms: TermChange[]): EquationChange["counts"] {
  const counts = { added: 0, removed: 0, changed: 0, unchanged: 0 };
  for (const change of terms) counts[change.status] += 1;
  return counts;
}

/** One equation's terms compared (either side may be missing: an added or removed coordinate). */
export function compareTerms(before: TermInfo[], after: TermInfo[]): TermChange[] {
  const leftBefore = [...before];
  const unchanged = new Set<TermInfo>();
  for (const term of after) {
    const index = leftBefore.findIndex((old) => old.view.id === term.view.id);
    if (index >= 0) {
      leftBefore.splice(index, 1);
      unchanged.add(term);
    }
  }
  const leftAfter = after.filter((term) => !unchanged.has(term));
  const beforeByMotion = new Map<string, TermInfo[]>();
  for (const term of leftBefore) beforeByMotion.set(term.motion, [...(beforeByMotion.get(term.motion) ?? []), term]);

  const out: TermChange[] = [];
  const emitted = new Set<string>();
  for (const term of after) {
    if (unchanged.has(term)) {
      out.push({ status: "unchanged", term: term.view });
      continue;
    }
    const counterpart = beforeByMotion.get(term.motion);
    if (!counterpart) {
      out.push({ status: "added", term: term.view });
      continue;
    }
    if (emitted.has(term.motion)) continue;
    emitted.add(term.motion);
    out.push({
      status: "changed",
      before: counterpart.map((old) => old.view),
      after: leftAfter.filter((other) => other.motion === term.motion).map((other) => other.view),
      motionLatex: term.motionExpr ? toLatex(term.motionExpr) : "1",
    });
  }
  for (const term of leftBefore) if (!emitted.has(term.motion)) out.push({ status: "removed", term: term.view });
  return out;
}

/**
 * Compares the equations of two evaluations coordinate by coordinate, in the
 * newer order, removed coordinates last. `isMotion` says which names vary with
 * the motion (coordinates, inputs, the time, multipliers).
 */
export function compareEquations(
  before: readonly ResidualEquation[],
  after: readonly ResidualEquation[],
  isMotion: (name: string) => boolean,
): EquationChange[] {
  const oldByCoordinate = new Map(before.map((equation) => [equation.coordinate, equation]));
  const newCoordinates = new Set(after.map((equation) => equation.coordinate));
  const changes: EquationChange[] = after.map((equation) => {
    const old = oldByCoordinate.get(equation.coordinate);
    const terms = compareTerms(old ? termsOfResidual(old.residual, isMotion) : [], termsOfResidual(equation.residual, isMotion));
    const counts = countsOf(terms);
    const status = !old ? "added" : counts.added + counts.removed + counts.changed > 0 ? "changed" : "unchanged";
    return { coordinate: equation.coordinate, coordinateLatex: symbolLatex(equation.coordinate), status, terms, counts };
  });
  for (const equation of before) {
    if (newCoordinates.has(equation.coordinate)) continue;
    const terms = compareTerms(termsOfResidual(equation.residual, isMotion), []);
    changes.push({ coordinate: equation.coordinate, coordinateLatex: symbolLatex(equation.coordinate), status: "removed", terms, counts: countsOf(terms) });
  }
  return changes;
}

/** The names that vary with the motion in a model: its coordinates and inputs, the time, and constraint multipliers. */
export function motionNames({ coordinates, inputs }: { coordinates: readonly string[]; inputs: readonly string[] }): (name: string) => boolean {
  const names = new Set([...coordinates, ...inputs, "t"]);
  return (name) => names.has(name) || name.startsWith("lambda_") || name.startsWith("mu_");
}
