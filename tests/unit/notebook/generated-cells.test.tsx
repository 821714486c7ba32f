// @vitest-environment jsdom
import { afterEach, describe, expect, it, vi } from "vitest";
import { configure, cleanup, fireEvent, render, screen, waitFor } from "@testing-library/react";
import { EquationsCellView } from "@/components/notebook/generated-cells";
import { Notebook } from "@/components/notebook/notebook";
import { renderLatex, trustTermData } from "@/components/notebook/katex-render";
import { createCell, modelToDocument, type EquationsCell } from "@/lib/notebook/document";
import type { NotebookResults } from "@/lib/notebook/results";
import { templateModel } from "@/lib/notebook/templates";
import { toLatexTerms } from "@/lib/mechanics/latex";
import { deriveModel } from "@/lib/mechanics/derive";
import { printDerivation } from "@/lib/mechanics/print";

afterEach(cleanup);
// Editors lint after a pause and KaTeX loads on first use; allow for a busy machine.
configure({ asyncUtilTimeout: 5000 });

/** KaTeX loads on first use and display math typesets after mount; wait until the terms are in and decorated. */
async function typeset(container: HTMLElement) {
  await waitFor(() => {
    const terms = [...container.querySelectorAll<HTMLElement>("[data-term]")];
    expect(terms.length).toBeGreaterThan(0);
    expect(terms.every((term) => term.tabIndex === 0)).toBe(true);
  });
}

// The equation's LaTeX comes from the engine's renderer, terms wrapped in \htmlData{term=ID}.
const residual = "m*l^2*theta'' + m*g*l*sin(theta)";
const rendered = toLatexTerms(residual);
const [inertiaTerm, gravityTerm] = rendered.terms.map((term) => term.id) as [string, string];
const results: NotebookResults = {
  equations: [{ coordinate: "theta", residual, latex: `${rendered.latex} = 0` }],
  massMatrixLatex: "\\begin{bmatrix} m l^{2} \\end{bmatrix} \\ddot{\\theta} = -m g l \\sin\\theta",
  timingMs: 3.2,
};

const cell: EquationsCell = { ...createCell("equations", "eq") };

describe("equations cell", () => {
  it("renders each term as an element addressable by its term id, reachable by keyboard", async () => {
    const { container } = render(<EquationsCellView cell={cell} results={results} onOperation={() => {}} />);
    await typeset(container);
    const terms = [...container.querySelectorAll<HTMLElement>("[data-term]")];
    expect(terms.map((t) => t.dataset.term)).toEqual([inertiaTerm, gravityTerm]);
    expect(terms[1]!.textContent).toContain("sin");
    expect(terms.every((t) => t.tabIndex === 0)).toBe(true);
  });

  it("renders the long equations of a 5-link chain without a KaTeX error", async () => {
    const derived = printDerivation(deriveModel(templateModel("n-link-chain", { links: 5 })));
    const chain: NotebookResults = { equations: derived.equations.map((e) => ({ coordinate: e.coordinate, residual: e.residual, latex: `${e.termLatex} = 0` })) };
    const { container } = render(<EquationsCellView cell={cell} results={chain} onOperation={() => {}} />);
    await typeset(container);
    expect(container.querySelectorAll(".katex-error")).toHaveLength(0);
    const perEquation = derived.equations.map((e) => e.terms.length);
    expect(container.querySelectorAll("[data-term]")).toHaveLength(perEquation.reduce((a, b) => a + b, 0));
    // Long equations break between terms rather than scroll: each is typeset as breakable inline math in
    // display style, where KaTeX puts every top-level term in its own box with a break allowed after it.
    const views = [...container.querySelectorAll<HTMLElement>(".hn-math-display")];
    expect(views).toHaveLength(5);
    for (const view of views) {
      expect(view.classList.contains("hn-math-breakable")).toBe(true);
      expect(view.querySelector(".katex-display")).toBeNull();
      const terms = [...view.querySelectorAll<HTMLElement>("[data-term]")];
      const boxes = new Set(terms.map((term) => term.closest(".katex-base")));
      expect(boxes.has(null)).toBe(false);
      expect(boxes.size).toBe(terms.length);
    }
    // jsdom parses KaTeX's large HTML slowly; the browser renders this in well under a second.
  }, 30_000);

  it("highlights a term on hover and reports it; selects it on Enter", async () => {
    const onTermFocus = vi.fn();
    const onTermSelect = vi.fn();
    const { container } = render(<EquationsCellView cell={cell} results={results} onOperation={() => {}} onTermFocus={onTermFocus} onTermSelect={onTermSelect} />);
    await typeset(container);
    const term = container.querySelector<HTMLElement>(`[data-term="${gravityTerm}"]`)!;
    fireEvent.mouseOver(term.querySelector(".mord") ?? term);
    expect(onTermFocus).toHaveBeenLastCalledWith(gravityTerm);
    expect(term.classList.contains("hn-term-active")).toBe(true);
    expect(container.querySelector(`[data-term="${inertiaTerm}"]`)!.classList.contains("hn-term-active")).toBe(false);
    fireEvent.keyDown(term, { key: "Enter" });
    expect(onTermSelect).toHaveBeenCalledWith(gravityTerm);
    fireEvent.mouseLeave(screen.getByTestId("equations"));
    expect(term.classList.contains("hn-term-active")).toBe(false);
  });

  it("highlights a term chosen from outside", async () => {
    const { container } = render(<EquationsCellView cell={cell} results={results} onOperation={() => {}} activeTerm={inertiaTerm} />);
    await typeset(container);
    expect(container.querySelector(`[data-term="${inertiaTerm}"]`)!.classList.contains("hn-term-active")).toBe(true);
  });

  it("switches to the mass-matrix form through a settings operation", () => {
    const onOperation = vi.fn();
    render(<EquationsCellView cell={cell} results={results} onOperation={onOperation} />);
    fireEvent.change(screen.getByRole("combobox", { name: "Form" }), { target: { value: "mass-matrix" } });
    expect(onOperation).toHaveBeenCalledWith({ type: "updateSettings", cellId: "eq", patch: { form: "mass-matrix" } });
  });

  it("says when nothing has been evaluated, and when an evaluation is running", () => {
    const { rerender } = render(<EquationsCellView cell={cell} results={null} onOperation={() => {}} />);
    expect(screen.getByRole("status").textContent).toMatch(/Not evaluated yet/);
    rerender(<EquationsCellView cell={cell} results={null} evaluating onOperation={() => {}} />);
    expect(screen.getByRole("status").textContent).toBe("Evaluating…");
  });
});

describe("stale results in the notebook", () => {
  const doc = modelToDocument(templateModel("single-pendulum"), (() => { let n = 0; return () => `c${++n}`; })());

  it("keeps the last results visible and marks generated cells stale, not source cells", async () => {
    const { rerender } = render(<Notebook document={doc} onChange={() => {}} results={results} />);
    expect(screen.queryByTestId("stale-marker")).toBeNull();
    rerender(<Notebook document={doc} onChange={() => {}} results={results} stale />);
    const equations = screen.getByTestId("cell-c5");
    expect(equations.querySelector('[data-testid="stale-marker"]')).not.toBeNull();
    expect(equations.classList.contains("hn-stale")).toBe(true);
    await typeset(equations);
    expect(equations.querySelectorAll("[data-term]")).toHaveLength(2);
    expect(screen.getByTestId("cell-c3").querySelector('[data-testid="stale-marker"]')).toBeNull();
    // While a new evaluation runs, the old results stay and the cell says it is working.
    rerender(<Notebook document={doc} onChange={() => {}} results={results} stale evaluating />);
    expect(screen.getByTestId("cell-c5").querySelector('[data-testid="busy-marker"]')).not.toBeNull();
    expect(screen.getByTestId("cell-c5").querySelectorAll("[data-term]")).toHaveLength(2);
  });

  it("lists evaluator errors that have no cell, and places the rest on their cells", async () => {
    render(
      <Notebook
        document={doc}
        onChange={() => {}}
        results={results}
        stale
        diagnostics={[
          { code: "too_large", field: "model", column: null, length: 1, message: "more than 12 coordinates" },
          { code: "unknown_symbol", field: "potential", column: 5, length: 1, message: 'unknown symbol "h"' },
        ]}
      />,
    );
    expect(screen.getByRole("alert").textContent).toContain("more than 12 coordinates");
    expect(await screen.findByText('unknown symbol "h"')).toBeTruthy();
  });
});

describe("KaTeX trust", () => {
  it("trusts \\htmlData with a plain term id and nothing else", () => {
    // KaTeX hands the attributes to the trust check with their data- prefix.
    expect(trustTermData({ command: "\\htmlData", attributes: { "data-term": "ab-12" } })).toBe(true);
    expect(trustTermData({ command: "\\htmlData", attributes: { "data-term": "x", "data-onclick": "y" } })).toBe(false);
    expect(trustTermData({ command: "\\htmlData", attributes: { "data-term": 'a b"' } })).toBe(false);
    expect(trustTermData({ command: "\\htmlData", attributes: { "data-other": "x" } })).toBe(false);
    expect(trustTermData({ command: "\\href" })).toBe(false);
    expect(renderLatex("\\htmlData{term=t-1}{x}")).toContain('data-term="t-1"');
    // Refused commands render as inert error text, never as a link.
    expect(renderLatex("\\href{javascript:alert(1)}{x}")).not.toContain("href=");
    expect(renderLatex("\\htmlClass{evil}{x}")).not.toContain('class="evil"');
  });
});
