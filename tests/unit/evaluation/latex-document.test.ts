import { describe, expect, it } from "vitest";
import { escapeLatexText, latexDocument } from "@/lib/evaluation/latex-document";
import { safetyNote } from "@/lib/domain";
import { joinLatexTerms } from "@/lib/mechanics";
import { demoModel, evaluateDemo } from "./in-process";

/** Every \begin{x} has its \end{x}, in order. */
function environmentsBalanced(latex: string): boolean {
  const open: string[] = [];
  for (const [, kind, name] of latex.matchAll(/\\(begin|end)\{([^}]+)\}/g)) {
    if (kind === "begin") open.push(name!);
    else if (open.pop() !== name) return false;
  }
  return open.length === 0;
}

describe("LaTeX document of a derivation", () => {
  it("escapes every character LaTeX treats specially in running text", () => {
    expect(escapeLatexText("Rig #2: 50% of m_1 & {x} ~ $3 ^ \\")).toBe(
      "Rig \\#2: 50\\% of m\\_1 \\& \\{x\\} \\textasciitilde{} \\$3 \\textasciicircum{} \\textbackslash{}",
    );
  });

  it("writes a complete article: the model, one equation per coordinate, the accelerations and the caution", async () => {
    const model = demoModel("Gantry crane: trolley");
    const result = await evaluateDemo("Gantry crane: trolley");
    const latex = latexDocument({ ...model, title: "Trolley & load_1" }, result);

    expect(latex.startsWith("\\documentclass[11pt]{article}")).toBe(true);
    expect(latex.trimEnd().endsWith("\\end{document}")).toBe(true);
    expect(environmentsBalanced(latex)).toBe(true);
    expect(latex).toContain("\\title{Trolley \\& load\\_1}");
    expect(latex.match(/\\begin\{equation\}/g)).toHaveLength(model.coordinates.length);
    for (const equation of result.equations) expect(latex).toContain(`${joinLatexTerms(equation.terms)} = 0`);
    expect(latex).toContain("Accelerations:");
    expect(latex).toContain(escapeLatexText(safetyNote));
  });
});
