// @vitest-environment jsdom
import { afterEach, describe, expect, it } from "vitest";
import { configure, cleanup, render, screen, waitFor, within } from "@testing-library/react";
import { EditorView } from "@codemirror/view";
import { Notebook } from "@/components/notebook/notebook";
import { documentToModel, modelToDocument, setExpression, type DerivationDocument } from "@/lib/notebook/document";
import { templateModel } from "@/lib/notebook/templates";
import type { ModelDiagnostic } from "@/lib/notebook/results";
import { ModelError, validateModel, checkModelUnits } from "@/lib/mechanics";

afterEach(cleanup);
// Editors lint after a pause and KaTeX loads on first use; allow for a busy machine.
configure({ asyncUtilTimeout: 5000 });

/** What the evaluate API would return for a model the engine refuses. */
function engineDiagnostics(doc: DerivationDocument): ModelDiagnostic[] {
  const model = documentToModel(doc);
  try {
    checkModelUnits(validateModel(model));
    return [];
  } catch (error) {
    if (error instanceof ModelError) return [error.toJSON()];
    throw error;
  }
}

function cellOfKind(doc: DerivationDocument, kind: string) {
  return doc.cells.find((cell) => cell.kind === kind)!;
}

describe("engine diagnostics in the notebook", () => {
  const counter = () => {
    let n = 0;
    return () => `c${++n}`;
  };

  it("shows an unknown symbol once, though the browser and the engine both find it", async () => {
    let doc = modelToDocument(templateModel("cart-with-pendulum"), counter());
    doc = setExpression(doc, cellOfKind(doc, "potential").id, "m*g*yL + k*x^2");
    const diagnostics = engineDiagnostics(doc);
    expect(diagnostics).toMatchObject([{ code: "unknown_symbol", field: "potential", column: 10 }]);
    render(<Notebook document={doc} onChange={() => {}} diagnostics={diagnostics} evaluatedModel={documentToModel(doc)} />);
    const cell = screen.getByTestId(`cell-${cellOfKind(doc, "potential").id}`);
    await waitFor(() => expect(within(cell).getAllByText('unknown symbol "k"')).toHaveLength(1));
    expect(within(cell).getByText(/col 10/)).toBeTruthy();
  });

  it("underlines the term a unit mismatch names, and drops it once the text changes", async () => {
    let doc = modelToDocument(templateModel("cart-with-pendulum"), counter());
    const kinetic = cellOfKind(doc, "kinetic");
    doc = setExpression(doc, kinetic.id, "1/2*M*x'^2 + 1/2*m*(xL'^2 + yL'^2) + m*x'");
    const diagnostics = engineDiagnostics(doc);
    expect(diagnostics).toMatchObject([{ code: "unit_mismatch", field: "kinetic" }]);
    const evaluated = documentToModel(doc);
    const { rerender } = render(<Notebook document={doc} onChange={() => {}} diagnostics={diagnostics} evaluatedModel={evaluated} />);
    const cell = screen.getByTestId(`cell-${kinetic.id}`);
    await waitFor(() => expect(cell.querySelector(".cm-lintRange-error")).not.toBeNull());
    // The engine points at the offending term by column and length.
    expect(cell.querySelector(".cm-lintRange-error")!.textContent).toBe(
      evaluated.kinetic.slice(diagnostics[0]!.column! - 1, diagnostics[0]!.column! - 1 + diagnostics[0]!.length),
    );
    expect(within(cell).getByText(diagnostics[0]!.message)).toBeTruthy();

    const edited = setExpression(doc, kinetic.id, "1/2*M*x'^2 + 1/2*m*(xL'^2 + yL'^2)");
    rerender(<Notebook document={edited} onChange={() => {}} diagnostics={diagnostics} evaluatedModel={evaluated} />);
    const view = EditorView.findFromDOM(within(cell).getByRole("textbox", { name: "Kinetic energy T" }))!;
    expect(view.state.doc.toString()).toBe("1/2*M*x'^2 + 1/2*m*(xL'^2 + yL'^2)");
    await waitFor(() => expect(within(cell).queryByText(diagnostics[0]!.message)).toBeNull());
  });
});
