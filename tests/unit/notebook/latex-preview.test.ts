import { describe, expect, it } from "vitest";
import { previewLatex, symbolLatex } from "@/lib/notebook/latex-preview";
import katex from "katex";

describe("fallback LaTeX preview", () => {
  it("applies the naming rules: rates as dots, trailing digits as subscripts, Greek letters", () => {
    expect(symbolLatex("theta1", 1)).toBe("\\dot{\\theta}_{1}");
    expect(symbolLatex("x", 2)).toBe("\\ddot{x}");
    expect(symbolLatex("m_load")).toBe("m_{\\mathrm{load}}");
    expect(symbolLatex("Omega")).toBe("\\Omega");
    expect(symbolLatex("xL")).toBe("\\mathrm{xL}");
  });

  it.each([
    ["1/2*m*(l*theta')^2", "\\frac{1}{2}\\,m\\,\\left(l\\,\\dot{\\theta}\\right)^{2}"],
    ["-m*g*l*cos(theta)", "-m\\,g\\,l\\,\\cos\\left(\\theta\\right)"],
    ["a - (b - c)", "a - \\left(b - c\\right)"],
    ["a + -b", "a + \\left(-b\\right)"],
    ["sin(theta1 - theta2)^2", "\\sin^{2}\\left(\\theta_{1} - \\theta_{2}\\right)"],
    ["x*2", "x \\cdot 2"],
    ["sqrt(abs(x))", "\\sqrt{\\left|x\\right|}"],
    ["2^-1", "2^{-1}"],
    ["(-x)^2", "\\left(-x\\right)^{2}"],
    ["1e-9*pi", "1\\times 10^{-9}\\,\\pi"],
    ["0.001*pi", "0.001\\,\\pi"],
  ])("%s", (text, latex) => {
    expect(previewLatex(text)).toBe(latex);
    // Every preview must also be LaTeX that KaTeX accepts.
    expect(() => katex.renderToString(latex, { throwOnError: true })).not.toThrow();
  });

  it("gives nothing for blank or unparseable text", () => {
    expect(previewLatex("  ")).toBeNull();
    expect(previewLatex("m*(")).toBeNull();
  });
});
