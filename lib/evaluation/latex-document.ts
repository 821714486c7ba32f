/**
 * The equations of a derivation as a stand-alone LaTeX document (article
 * class, amsmath), for reports. Term ids are a notebook feature, so the
 * document uses the engine's plain LaTeX.
 */
import { joinLatexTerms, symbolLatex, toLatex, type Model } from "@/lib/mechanics";
import { safetyNote } from "@/lib/domain";
import type { EvaluationResult } from "./evaluate";

const TEXT_ESCAPES: Record<string, string> = {
  "\\": "\\textbackslash{}",
  "{": "\\{",
  "}": "\\}",
  $: "\\$",
  "&": "\\&",
  "#": "\\#",
  "^": "\\textasciicircum{}",
  _: "\\_",
  "%": "\\%",
  "~": "\\textasciitilde{}",
};

/** Escapes running text (titles, descriptions, units) for LaTeX. */
export function escapeLatexText(text: string): string {
  return text.replace(/[\\{}$&#^_%~]/g, (c) => TEXT_ESCAPES[c]!);
}

function symbolList(entries: { name: string; unit: string; value?: number; description?: string }[]): string {
  const items = entries.map((entry) => {
    const value = entry.value === undefined ? "" : ` $= ${entry.value}$`;
    const description = entry.description ? ` --- ${escapeLatexText(entry.description)}` : "";
    return `  \\item $${symbolLatex(entry.name)}$${value} \\quad [\\texttt{${escapeLatexText(entry.unit)}}]${description}`;
  });
  return `\\begin{itemize}\n${items.join("\n")}\n\\end{itemize}`;
}

/** A complete LaTeX document of the model and its derived equations. */
export function latexDocument(model: Model, result: EvaluationResult): string {
  const lines: string[] = [
    "\\documentclass[11pt]{article}",
    "\\usepackage[utf8]{inputenc}",
    "\\usepackage{amsmath}",
    "\\usepackage{amssymb}",
    "\\usepackage{amsthm}",
    "\\theoremstyle{remark}",
    "\\newtheorem*{remark}{Remark}",
    `\\title{${escapeLatexText(model.title || "Derivation")}}`,
    "\\date{}",
    "\\begin{document}",
    "\\maketitle",
    "",
    "\\section*{Model}",
    "Generalized coordinates:",
    symbolList(model.coordinates),
  ];
  if (model.parameters.length > 0) lines.push("Parameters:", symbolList(model.parameters));
  if (model.inputs && model.inputs.length > 0) lines.push("Inputs:", symbolList(model.inputs));
  if (model.definitions && model.definitions.length > 0) {
    lines.push("Definitions:", "\\begin{align*}");
    lines.push(model.definitions.map((d) => `  ${symbolLatex(d.name)} &= ${toLatex(d.expr)}`).join(" \\\\\n"));
    lines.push("\\end{align*}");
  }
  lines.push("Kinetic energy, potential energy" + (model.dissipation ? " and dissipation function" : "") + ":", "\\begin{align*}");
  const energies = [`  T &= ${toLatex(model.kinetic)}`, `  V &= ${toLatex(model.potential)}`];
  if (model.dissipation) energies.push(`  D &= ${toLatex(model.dissipation)}`);
  lines.push(energies.join(" \\\\\n"), "\\end{align*}");
  const forces = Object.entries(model.forces ?? {});
  if (forces.length > 0) {
    lines.push("Generalized forces:", "\\begin{align*}");
    lines.push(forces.map(([coordinate, expr]) => `  Q_{${symbolLatex(coordinate)}} &= ${toLatex(expr)}`).join(" \\\\\n"));
    lines.push("\\end{align*}");
  }

  lines.push(
    "",
    "\\section*{Equations of motion}",
    "Residual form, $\\frac{d}{dt}\\frac{\\partial L}{\\partial \\dot q} - \\frac{\\partial L}{\\partial q} + \\frac{\\partial D}{\\partial \\dot q} - Q_q = 0$ with $L = T - V$, one equation per coordinate:",
  );
  // The engine's LaTeX of the display form, term by term (the results hold no tree to render again).
  for (const equation of result.equations) {
    lines.push("\\begin{equation}", `  ${joinLatexTerms(equation.terms)} = 0`, "\\end{equation}");
  }
  lines.push("Mass-matrix form $M(q)\\,\\ddot q = f(q, \\dot q, t, u)$:", "\\begin{equation*}", `  ${result.massMatrixLatex ?? ""}`, "\\end{equation*}");
  if (result.accelerations && result.accelerations.length > 0) {
    lines.push("Accelerations:", "\\begin{align*}");
    lines.push(result.accelerations.map((a) => `  ${a.latex.replace(" = ", " &= ")}`).join(" \\\\\n"));
    lines.push("\\end{align*}");
  }
  if (result.energyLatex) lines.push("Energy function:", "\\begin{equation*}", `  h = ${result.energyLatex}`, "\\end{equation*}");
  if (result.conserved && result.conserved.length > 0) {
    lines.push("\\section*{Conserved quantities}", "\\begin{itemize}");
    for (const quantity of result.conserved) {
      lines.push(`  \\item ${escapeLatexText(quantity.name)}: $${quantity.latex}$ (${escapeLatexText(quantity.reason)})`);
    }
    lines.push("\\end{itemize}");
  }
  lines.push("", "\\begin{remark}", escapeLatexText(safetyNote), "\\end{remark}", "", "\\end{document}", "");
  return lines.join("\n");
}
