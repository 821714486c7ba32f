import katex from "katex";
import { describe, expect, it } from "vitest";
import { formatExpression } from "@/lib/mechanics/expr/parse";
import { symbolLatex, termId, toLatex, toLatexTerms } from "@/lib/mechanics/latex";
import { randomExpression, seededRandom } from "./helpers/random-expr";

/** Renders as the notebook does: KaTeX trusting \htmlData only; throws on any error. */
function render(latex: string): string {
  return katex.renderToString(latex, {
    throwOnError: true,
    // Everything non-standard is an error except the HTML extension \htmlData needs.
    strict: (code: string) => (code === "htmlExtension" ? "ignore" : "error"),
    trust: (context) => context.command === "\\htmlData",
  });
}

describe("symbolLatex", () => {
  it("renders rates, accelerations, subscripts and greek names", () => {
    expect(symbolLatex("q", 1)).toBe("\\dot{q}");
    expect(symbolLatex("q", 2)).toBe("\\ddot{q}");
    expect(symbolLatex("theta1")).toBe("\\theta_{1}");
    expect(symbolLatex("theta1", 1)).toBe("\\dot{\\theta}_{1}");
    expect(symbolLatex("m12")).toBe("m_{12}");
    expect(symbolLatex("x_tip")).toBe("x_{\\mathrm{tip}}");
    expect(symbolLatex("k_theta")).toBe("k_{\\theta}");
    expect(symbolLatex("Omega")).toBe("\\Omega");
    expect(symbolLatex("omega")).toBe("\\omega");
    expect(symbolLatex("Jp")).toBe("\\mathit{Jp}");
    expect(symbolLatex("phi2", 2)).toBe("\\ddot{\\phi}_{2}");
  });
});

describe("toLatex", () => {
  it("writes fractions, functions, powers and products with thin spaces", () => {
    expect(toLatex("1/2*m1*(l1*theta1')^2")).toBe("\\frac{1}{2}\\,m_{1}\\,\\left(l_{1}\\,\\dot{\\theta}_{1}\\right)^{2}");
    expect(toLatex("a/(b + c)")).toBe("\\frac{a}{b + c}");
    expect(toLatex("sin(theta1 - theta2)^2")).toBe("\\sin^{2}\\left(\\theta_{1} - \\theta_{2}\\right)");
    expect(toLatex("sqrt(k/m)")).toBe("\\sqrt{\\frac{k}{m}}");
    expect(toLatex("pi*r^2")).toBe("\\pi\\,r^{2}");
    expect(toLatex("2*3")).toBe("2 \\cdot 3");
    expect(toLatex("m*x'' + c*x' - k*x")).toBe("m\\,\\ddot{x} + c\\,\\dot{x} - k\\,x");
    expect(toLatex("(a + b)*(c - d)")).toBe("\\left(a + b\\right)\\,\\left(c - d\\right)");
    expect(toLatex("a*(-b)")).toBe("-a\\,b");
    expect(toLatex("(-x)^2")).toBe("\\left(-x\\right)^{2}");
    expect(toLatex("log(x) + atan(y)")).toBe("\\ln\\left(x\\right) + \\arctan\\left(y\\right)");
    expect(toLatex("abs(v)*v")).toBe("\\left|v\\right|\\,v");
  });

  it("never juxtaposes two numbers", () => {
    expect(toLatex("2*3*4*x")).not.toMatch(/\d\s*\\,\s*\d|\d\d/);
  });

  it("renders with KaTeX for random expressions (seeded)", () => {
    const random = seededRandom(31337);
    const names = ["theta1", "theta2'", "x_tip", "Omega", "m12", "q''", "k_theta", "Jp", "t"];
    for (let trial = 0; trial < 300; trial++) {
      const text = formatExpression(randomExpression(random, names, 5));
      const latex = toLatex(text);
      expect(() => render(latex), `${text} → ${latex}`).not.toThrow();
      expect(() => render(toLatexTerms(text).latex), text).not.toThrow();
    }
  });
});

describe("toLatexTerms", () => {
  it("wraps each top-level term with a stable id from its signed text", () => {
    const { latex, terms } = toLatexTerms("(m1 + m2)*l1*theta1'' + m2*l2*cos(theta1 - theta2)*theta2'' - -g*sin(theta1)");
    expect(terms.map((t) => t.text)).toEqual(["(m1 + m2)*l1*theta1''", "m2*l2*cos(theta1 - theta2)*theta2''", "g*sin(theta1)"]);
    for (const term of terms) {
      expect(term.id).toMatch(/^[0-9a-z]+$/);
      expect(term.id).toBe(termId(term.text));
      expect(latex).toContain(`\\htmlData{term=${term.id}}{${term.latex}}`);
    }
    const html = render(latex);
    expect(html).toContain(`data-term="${terms[0]!.id}"`);
    expect(html.match(/data-term=/g)).toHaveLength(3);
  });

  it("gives a term the same id wherever it stands and however its sign is written", () => {
    const a = toLatexTerms("k*x - c*x'").terms;
    const b = toLatexTerms("-(c*x') + 2*y + k*x").terms;
    expect(b.find((t) => t.text === "-c*x'")!.id).toBe(a[1]!.id);
    expect(b.find((t) => t.text === "k*x")!.id).toBe(a[0]!.id);
    expect(toLatexTerms("a*(-b)").terms[0]!.text).toBe("-a*b");
    expect(toLatexTerms("-(a*b)").terms[0]!.id).toBe(toLatexTerms("a*(-b)").terms[0]!.id);
  });

  it("keeps ids unique when a term repeats", () => {
    const { terms } = toLatexTerms("x + x");
    expect(new Set(terms.map((t) => t.id)).size).toBe(2);
  });

  it("carries no data attributes through KaTeX without trust", () => {
    const html = katex.renderToString(toLatexTerms("a + b").latex, { throwOnError: true, strict: "ignore", trust: false });
    expect(html).not.toContain("data-term");
  });
});
