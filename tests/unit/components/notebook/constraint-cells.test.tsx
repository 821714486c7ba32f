// @vitest-environment jsdom
import { afterEach, describe, expect, it, vi } from "vitest";
import { cleanup, configure, fireEvent, render, screen, waitFor, within } from "@testing-library/react";
import { useState } from "react";
import { localDiagnostics } from "@/components/notebook/editor/diagnostics";
import { TableCellEditor } from "@/components/notebook/table-cell";
import type { Model } from "@/lib/mechanics";
import {
  DOCUMENT_SCHEMA_VERSION,
  applyOperation,
  documentSymbols,
  documentToModel,
  modelToDocument,
  parseStoredDocument,
  type DerivationDocument,
  type DocumentOperation,
  type TableCell,
} from "@/lib/notebook/document";
import { locateDiagnostics } from "@/lib/notebook/results";

afterEach(cleanup);
configure({ asyncUtilTimeout: 5000 });

const coordinates: TableCell = {
  id: "q",
  kind: "coordinates",
  collapsed: false,
  rows: [
    { id: "r1", name: "x", unit: "m", description: "" },
    { id: "r2", name: "y", unit: "m", description: "" },
  ],
};
const parameters: TableCell = { id: "p", kind: "parameters", collapsed: false, rows: [{ id: "r1", name: "l", unit: "m", value: "6.5", description: "" }] };
const constraints: TableCell = {
  id: "g",
  kind: "constraints",
  collapsed: false,
  rows: [{ id: "r1", name: "rope", expr: "x^2 + y^2 - l^2", description: "hoist rope" }],
};
const outputs: TableCell = {
  id: "o",
  kind: "outputs",
  collapsed: false,
  rows: [{ id: "r1", name: "tension", expr: "-2*l*lambda_rope", unit: "N", description: "" }],
};

function Harness({ initial, onOp }: { initial: TableCell[]; onOp?: (op: DocumentOperation) => void }) {
  const [doc, setDoc] = useState<DerivationDocument>({ schemaVersion: DOCUMENT_SCHEMA_VERSION, title: "t", cells: initial });
  let n = 0;
  return (
    <>
      {doc.cells.map((cell) => (
        <TableCellEditor
          key={cell.id}
          cell={cell as TableCell}
          symbols={documentSymbols(doc)}
          newId={() => `new${++n}`}
          onOperation={(op) => {
            onOp?.(op);
            setDoc((current) => applyOperation(current, op));
          }}
        />
      ))}
    </>
  );
}

describe("constraint cells", () => {
  it("edit a position constraint with the expression editor and preview it as expr = 0 in KaTeX", async () => {
    const { container } = render(<Harness initial={[constraints]} />);
    expect(screen.getByRole("textbox", { name: "Expression of rope" })).toBeTruthy();
    await waitFor(() => expect(container.querySelector("annotation[encoding='application/x-tex']")).not.toBeNull());
    expect(container.querySelector("annotation[encoding='application/x-tex']")?.textContent).toMatch(/= 0$/);
    expect(screen.getByRole("textbox", { name: "Description, constraint 1" })).toBeTruthy();
  });

  it("add rate constraints through an addRow operation with an empty expression", () => {
    const onOp = vi.fn();
    render(<Harness initial={[{ id: "w", kind: "rate-constraints", collapsed: false, rows: [] }]} onOp={onOp} />);
    expect(screen.getByText("No rate constraints yet.")).toBeTruthy();
    fireEvent.click(screen.getByRole("button", { name: "+ Add rate constraint" }));
    expect(onOp).toHaveBeenCalledWith({ type: "addRow", cellId: "w", row: { id: "new1", name: "", expr: "", description: "" } });
    expect(screen.getByRole("textbox", { name: "Name, rate constraint 1" })).toBeTruthy();
  });

  it("place the engine's diagnostic of a rate constraint on its row", () => {
    const rate: TableCell = { id: "w", kind: "rate-constraints", collapsed: false, rows: [{ id: "r1", name: "roll", expr: "x' - r*phi'", description: "" }] };
    const doc: DerivationDocument = { schemaVersion: DOCUMENT_SCHEMA_VERSION, title: "t", cells: [rate] };
    const { byCell } = locateDiagnostics(doc, [{ code: "unknown_symbol", field: "rateConstraints[0].name", column: null, length: 1, message: "roll clashes" }]);
    render(<TableCellEditor cell={rate} symbols={documentSymbols(doc)} diagnostics={byCell.get("w")} newId={() => "x"} onOperation={() => {}} />);
    const row = screen.getByRole("textbox", { name: "Name, rate constraint 1" }).closest("tr")!;
    expect(within(row).getByText("roll clashes")).toBeTruthy();
  });
});

describe("outputs cell", () => {
  it("has a unit column with the instant unit check", () => {
    render(<Harness initial={[outputs]} />);
    const unit = screen.getByRole("textbox", { name: "Unit, output 1" }) as HTMLInputElement;
    expect(unit.value).toBe("N");
    fireEvent.change(unit, { target: { value: "Nwt" } });
    expect(unit.getAttribute("aria-invalid")).toBe("true");
    fireEvent.change(unit, { target: { value: "kg*m/s^2" } });
    expect(unit.getAttribute("aria-invalid")).toBeNull();
  });

  it("offers the constraints' multipliers as known symbols, without rates", () => {
    const doc: DerivationDocument = { schemaVersion: DOCUMENT_SCHEMA_VERSION, title: "t", cells: [coordinates, parameters, constraints, outputs] };
    const symbols = documentSymbols(doc);
    expect(symbols.multipliers).toEqual(["lambda_rope"]);
    expect(localDiagnostics("-2*l*lambda_rope + y''", symbols, { checkSymbols: true })).toEqual([]);
    expect(localDiagnostics("lambda_rope'", symbols, { checkSymbols: true })[0]?.message).toBe('"lambda_rope" is a multiplier and has no rate');
    expect(localDiagnostics("lambda_hoist", symbols, { checkSymbols: true })[0]?.message).toBe('unknown symbol "lambda_hoist"');
  });
});

describe("model file conversion", () => {
  const model: Model = {
    title: "Hoist rope",
    coordinates: [
      { name: "x", unit: "m" },
      { name: "y", unit: "m" },
    ],
    parameters: [{ name: "l", unit: "m", value: 6.5 }],
    kinetic: "1/2*(x'^2 + y'^2)",
    potential: "9.81*y",
    constraints: [{ name: "rope", expr: "x^2 + y^2 - l^2", description: "hoist rope" }],
    rateConstraints: [{ name: "guide", expr: "x' - 0.1*y'" }],
    outputs: [{ name: "tension", expr: "-2*l*lambda_rope", unit: "N" }],
  };

  it("round-trips constraints, rate constraints and outputs through the document", () => {
    const doc = modelToDocument(model);
    expect(doc.cells.map((c) => c.kind)).toEqual([
      "coordinates",
      "parameters",
      "kinetic",
      "potential",
      "constraints",
      "rate-constraints",
      "outputs",
      "equations",
      "conserved",
    ]);
    expect(documentToModel(doc)).toEqual(model);
  });

  it("keeps a version-3 document with the new cells readable as stored", () => {
    const doc = modelToDocument(model);
    const parsed = parseStoredDocument(JSON.parse(JSON.stringify(doc)));
    expect(parsed.ok).toBe(true);
  });
});
