import katex from "katex";
import { describe, expect, it } from "vitest";
import { canonicalize } from "@/lib/mechanics/canonical";
import { deriveModel } from "@/lib/mechanics/derive";
import type { Expr } from "@/lib/mechanics/expr/ast";
import { formatExpression, parseExpression } from "@/lib/mechanics/expr/parse";
import { joinLatexTerms, toLatex } from "@/lib/mechanics/latex";
import { printDerivation, quotientLatex } from "@/lib/mechanics/print";
import { chainModel } from "@/lib/mechanics/templates/chain";
import { topLevelTerms } from "@/lib/mechanics/terms";

/** Renders as the notebook does (KaTeX trusting \htmlData only); throws on any error. */
function render(latex: string): string {
  return katex.renderToString(latex, {
    throwOnError: true,
    strict: (code: string) => (code === "htmlExtension" ? "ignore" : "error"),
    trust: (context) => context.command === "\\htmlData",
  });
}

describe("printDerivation", () => {
  const model = chainModel({ links: 2 });
  const result = deriveModel(model);
  const printed = printDerivation(result);

  it("prints the canonical trees as text that parses back to the same canonical sums", () => {
    const coordinates = model.coordinates.map((c) => c.name);
    const pairs: [string, Expr][] = [
      ...printed.equations.map((e, i): [string, Expr] => [e.residual, result.equations[i]!.residual]),
      ...printed.massMatrix.flat().map((m, k): [string, Expr] => [m, result.massMatrix.flat()[k]!]),
      ...printed.forcing.map((f, i): [string, Expr] => [f, result.forcing[i]!]),
      [printed.energy, result.energy],
    ];
    for (const [text, tree] of pairs) {
      expect(text).toBe(formatExpression(tree));
      const c = canonicalize([text, tree], { coordinates });
      expect(c.algebra.sub(c.polys[0]!, c.polys[1]!).size).toBe(0);
    }
  });

  it("renders the display forms as LaTeX KaTeX accepts, one term mark per displayed term", () => {
    for (const [i, equation] of printed.equations.entries()) {
      expect(equation.latex).toBe(toLatex(result.equations[i]!.display));
      expect(equation.terms).toHaveLength(topLevelTerms(result.equations[i]!.display).length);
      expect(render(`${equation.termLatex} = 0`).match(/data-term=/g)).toHaveLength(equation.terms.length);
      // Without the marks the terms give the plain LaTeX back (what the LaTeX document prints).
      expect(joinLatexTerms(equation.terms)).toBe(equation.latex);
    }
    for (const latex of [...printed.latex.massMatrix.flat(), ...printed.latex.forcing, printed.latex.energy]) expect(() => render(latex)).not.toThrow();
    expect(Array.isArray(printed.accelerations)).toBe(true);
    if (Array.isArray(printed.accelerations)) for (const a of printed.accelerations) expect(() => render(`\\ddot{q} = ${a.latex}`)).not.toThrow();
  });

  it("writes a wide numerator as (1/D)·(N) so it can break between terms, a narrow one as a fraction", () => {
    const wide =
      "(-2*m2*l1*sin(q1 - q2)*cos(q1 - q2)*q1'^2 - 2*m2*l2*sin(q1 - q2)*q2'^2 - (2*m1 + m2)*g*sin(q1) - m2*g*sin(q1 - 2*q2))/(2*(m1 + m2*sin(q1 - q2)^2)*l1)";
    expect(quotientLatex(parseExpression(wide))).toMatch(/^\\frac\{1\}\{2\\,\\left\(m_\{1\} \+ .*\\,\\allowbreak\\Bigl\(-2\\,m_\{2\}.*\\Bigr\)$/);
    expect(quotientLatex(parseExpression("(a + b + c + d + e)/m"))).toBe("\\frac{a + b + c + d + e}{m}");
    expect(quotientLatex(parseExpression("(a + b)/m"))).toBe("\\frac{a + b}{m}");
    expect(() => render(quotientLatex(parseExpression("(a - b + c*x' + d + e*sin(q))/(m + n*cos(q)^2)")))).not.toThrow();
  });
});
