// @vitest-environment jsdom
import { afterEach, describe, expect, it, vi } from "vitest";
import { configure, cleanup, fireEvent, render, screen, waitFor } from "@testing-library/react";
import { ConservedCellView, EquationsCellView, LinearizationCellView } from "@/components/notebook/generated-cells";
import { Notebook } from "@/components/notebook/notebook";
import { renderLatex, trustTermData } from "@/components/notebook/katex-render";
import { createCell, modelToDocument, type ConservedCell, type EquationsCell, type LinearizationCell } from "@/lib/notebook/document";
import { STABILITY_RULE, toLatexTerms, deriveModel, printDerivation } from "@/lib/mechanics";
import { evaluateDemo } from "../../evaluation/in-process";
import type { NotebookResults } from "@/lib/notebook/results";
import { templateModel } from "@/lib/notebook/templates";

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
    const chain: NotebookResults = {
      equations: derived.equations.map((e) => ({ coordinate: e.coordinate, residual: e.residual, latex: `${e.termLatex} = 0` })),
    };
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
    const { container } = render(
      <EquationsCellView cell={cell} results={results} onOperation={() => {}} onTermFocus={onTermFocus} onTermSelect={onTermSelect} />,
    );
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
  const doc = modelToDocument(
    templateModel("single-pendulum"),
    (() => {
      let n = 0;
      return () => `c${++n}`;
    })(),
  );

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

describe("linearization cell", () => {
  const linearizationCell = (equilibriumIndex: number): LinearizationCell => {
    const base = createCell("linearization", "lin");
    return { ...base, settings: { ...base.settings, equilibriumIndex } };
  };

  it("crane trolley: the cell says marginal where the list says marginal, with the rule beside it", async () => {
    const results = await evaluateDemo("Gantry crane: trolley");
    render(<LinearizationCellView cell={linearizationCell(0)} results={results} onOperation={() => {}} inputNames={["F"]} />);
    const options = screen.getAllByRole("option").map((option) => option.textContent);
    expect(options).toEqual(["1. x = 0, theta = 0 (marginal)", "2. x = 0, theta = 3.14159 (unstable)"]);
    const verdict = screen.getByTestId("stability-verdict");
    expect(verdict.textContent).toContain("Marginal equilibrium.");
    expect(verdict.textContent).not.toContain("Unstable");
    expect(verdict.querySelector("strong")!.classList.contains("text-danger")).toBe(false);
    expect(verdict.textContent).toContain("λ = 0 is an eigenvalue");
    // The rule the verdict follows is stated next to it.
    expect(verdict.textContent).toContain(STABILITY_RULE);
    // Eigenvalues as read by the rule: 0, the damped swing pair, the trolley's decay; none growing.
    expect(verdict.textContent).toMatch(/Eigenvalues of A \(1\/s\): 0, −0\.04214, −0\.04952 ± 2\.248i/);
    expect(verdict.textContent).not.toContain("(grows)");
    const rows = screen.getAllByTestId("mode-row");
    expect(rows.map((row) => row.dataset.kind)).toEqual(["rigid", "oscillating"]);
    expect(rows[1]!.textContent).toContain("0.35802");
  });

  it("crane trolley upright: every mode is listed and the growing one is marked", async () => {
    const results = await evaluateDemo("Gantry crane: trolley", 1);
    render(<LinearizationCellView cell={linearizationCell(1)} results={results} onOperation={() => {}} inputNames={["F"]} />);
    const verdict = screen.getByTestId("stability-verdict");
    expect(verdict.textContent).toContain("Unstable equilibrium.");
    expect(verdict.querySelector("strong")!.classList.contains("text-danger")).toBe(true);
    expect(verdict.textContent).toContain("2.201 (grows)");
    const rows = screen.getAllByTestId("mode-row");
    // Two coordinates, two modes: the divergent one grows like exp(√((g/l)(1 + m/M))·t) = exp(2.25·t) (fact of the trade).
    expect(rows).toHaveLength(2);
    const divergent = rows.find((row) => row.dataset.kind === "divergent")!;
    expect(divergent.textContent).toContain("growing: exp(2.25·t)");
    expect(divergent.classList.contains("text-danger")).toBe(true);
  });

  it("seat rig: stable, with the damped frequency and damping ratio beside the natural frequency", async () => {
    const results = await evaluateDemo("Seat-suspension");
    render(<LinearizationCellView cell={linearizationCell(0)} results={results} onOperation={() => {}} inputNames={["F_b"]} />);
    expect(screen.getByTestId("stability-verdict").textContent).toContain("Stable equilibrium.");
    // ω = √(k/m) = 21.03 rad/s → 3.3464 Hz; ζ = c/(2√(k m)) = 0.325; ω_d = ω√(1 − ζ²) → 3.1643 Hz
    // (Thomson & Dahleh, Theory of Vibration with Applications, 5th ed., §2.6 — from memory).
    const [row] = screen.getAllByTestId("mode-row");
    expect(row!.textContent).toContain("3.3464");
    expect(row!.textContent).toContain("3.1643, ζ = 0.325");
  });
});

describe("conserved-quantities cell", () => {
  const conservedCell = createCell("conserved", "cons") as ConservedCell;

  it("crane trolley: says x is cyclic and which force and dissipation change its momentum", async () => {
    const results = await evaluateDemo("Gantry crane: trolley");
    render(<ConservedCellView cell={conservedCell} results={results} onOperation={() => {}} />);
    const body = document.body.textContent ?? "";
    expect(body).not.toContain("no coordinate is cyclic");
    expect(body).not.toContain("No coordinate is cyclic");
    expect(screen.getByTestId("cyclic-not-conserved").textContent).toContain(
      "x is cyclic (the Lagrangian does not depend on it), but its momentum is not conserved: the applied force and the dissipation act on it.",
    );
    expect(body).toContain("Energy function — not conserved: the dissipation function removes energy; applied forces act (F on x)");
  });

  it("says no coordinate is cyclic only when none is", () => {
    render(<ConservedCellView cell={conservedCell} results={{ equations: [], conserved: [], cyclicMomenta: [] }} onOperation={() => {}} />);
    expect(document.body.textContent).toContain("No conserved quantity found. No coordinate is cyclic");
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
