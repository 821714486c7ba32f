// @vitest-environment jsdom
import { afterEach, describe, expect, it, vi } from "vitest";
import { configure, cleanup, fireEvent, render, screen, waitFor, within } from "@testing-library/react";
import { useState } from "react";
import { TableCellEditor } from "@/components/notebook/table-cell";
import {
  DOCUMENT_SCHEMA_VERSION,
  applyOperation,
  documentSymbols,
  type DerivationDocument,
  type DocumentOperation,
  type ParametersCell,
  type TableCell,
} from "@/lib/notebook/document";
import { duplicateNames } from "@/lib/notebook/field-checks";
import { locateDiagnostics } from "@/lib/notebook/results";

afterEach(cleanup);
// Editors lint after a pause and KaTeX loads on first use; allow for a busy machine.
configure({ asyncUtilTimeout: 5000 });

const parameters: ParametersCell = {
  id: "p",
  kind: "parameters",
  collapsed: false,
  rows: [
    { id: "r1", name: "m", unit: "kg", value: "800", description: "load mass" },
    { id: "r2", name: "g", unit: "m/s^2", value: "9.81", description: "" },
  ],
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
          duplicateNames={new Set(duplicateNames(doc).keys())}
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

describe("parameter grid", () => {
  it("shows the rows and edits a cell through an updateRow operation", () => {
    const onOp = vi.fn();
    render(<Harness initial={[parameters]} onOp={onOp} />);
    const value = screen.getByRole("textbox", { name: "Value, parameter 1" });
    expect((value as HTMLInputElement).value).toBe("800");
    fireEvent.change(value, { target: { value: "750" } });
    expect(onOp).toHaveBeenLastCalledWith({ type: "updateRow", cellId: "p", rowId: "r1", patch: { value: "750" } });
    expect((screen.getByRole("textbox", { name: "Value, parameter 1" }) as HTMLInputElement).value).toBe("750");
  });

  it("flags a unit that is not SI syntax and clears the flag once fixed, keeping what was typed", () => {
    render(<Harness initial={[parameters]} />);
    const unit = screen.getByRole("textbox", { name: "Unit, parameter 2" });
    fireEvent.change(unit, { target: { value: "ft/s^2" } });
    expect(unit.getAttribute("aria-invalid")).toBe("true");
    expect(screen.getByText(/"ft" is not a unit symbol/)).toBeTruthy();
    expect((unit as HTMLInputElement).value).toBe("ft/s^2");
    fireEvent.change(unit, { target: { value: "m/s^2" } });
    expect(unit.getAttribute("aria-invalid")).toBeNull();
    expect(screen.queryByText(/not a unit symbol/)).toBeNull();
  });

  it("flags a value that is not a number and accepts blank as symbolic", () => {
    render(<Harness initial={[parameters]} />);
    const value = screen.getByRole("textbox", { name: "Value, parameter 2" });
    fireEvent.change(value, { target: { value: "9,81" } });
    expect(screen.getByText(/not a number/)).toBeTruthy();
    fireEvent.change(value, { target: { value: "" } });
    expect(value.getAttribute("aria-invalid")).toBeNull();
  });

  it("flags reserved and duplicated names across grids", () => {
    const coordinates: TableCell = { id: "c", kind: "coordinates", collapsed: false, rows: [{ id: "q1", name: "m", unit: "m", description: "" }] };
    render(<Harness initial={[coordinates, parameters]} />);
    expect(screen.getAllByText(/"m" is used more than once/)).toHaveLength(2);
    fireEvent.change(screen.getByRole("textbox", { name: "Name, coordinate 1" }), { target: { value: "sin" } });
    expect(screen.getByText(/"sin" is reserved/)).toBeTruthy();
    expect(screen.queryByText(/used more than once/)).toBeNull();
  });

  it("adds a blank row without complaining about it, and removes rows", () => {
    render(<Harness initial={[parameters]} />);
    fireEvent.click(screen.getByRole("button", { name: "+ Add parameter" }));
    const name = screen.getByRole("textbox", { name: "Name, parameter 3" });
    expect(name.getAttribute("aria-invalid")).toBeNull();
    fireEvent.change(screen.getByRole("textbox", { name: "Unit, parameter 3" }), { target: { value: "N/m" } });
    // Once the row has content, a missing name is pointed out.
    expect(screen.getByRole("textbox", { name: "Name, parameter 3" }).getAttribute("aria-invalid")).toBe("true");
    fireEvent.click(screen.getByRole("button", { name: "Remove parameter m" }));
    expect(screen.queryByRole("textbox", { name: "Name, parameter 3" })).toBeNull();
    expect(screen.getAllByRole("row")).toHaveLength(3);
  });

  it("places an evaluator unit diagnostic on its row and column", () => {
    const doc: DerivationDocument = { schemaVersion: DOCUMENT_SCHEMA_VERSION, title: "t", cells: [parameters] };
    const { byCell } = locateDiagnostics(doc, [
      { code: "unit", field: "parameters[1].unit", column: null, length: 1, message: "unit of g must be an acceleration" },
    ]);
    render(<TableCellEditor cell={parameters} symbols={documentSymbols(doc)} diagnostics={byCell.get("p")} newId={() => "x"} onOperation={() => {}} />);
    const row = screen.getByRole("textbox", { name: "Unit, parameter 2" }).closest("tr")!;
    expect(within(row).getByText("unit of g must be an acceleration")).toBeTruthy();
    expect(screen.getByRole("textbox", { name: "Unit, parameter 2" }).getAttribute("aria-invalid")).toBe("true");
    expect(screen.getByRole("textbox", { name: "Unit, parameter 1" }).getAttribute("aria-invalid")).toBeNull();
  });

  it("renders definitions with an expression editor and a live preview", async () => {
    const definitions: TableCell = { id: "d", kind: "definitions", collapsed: false, rows: [{ id: "x", name: "x1", expr: "l1*sin(theta1)", description: "" }] };
    const { container } = render(<Harness initial={[definitions]} />);
    expect(screen.getByRole("textbox", { name: "Expression of x1" })).toBeTruthy();
    // KaTeX MathML carries the source; the subscript and the sine show the naming rules applied.
    await waitFor(() => expect(container.querySelector("annotation[encoding='application/x-tex']")).not.toBeNull());
    const annotation = container.querySelector("annotation[encoding='application/x-tex']");
    expect(annotation?.textContent).toBe("x_{1} = l_{1}\\,\\sin\\left(\\theta_{1}\\right)");
  });
});

describe("adding rows", () => {
  it("moves the focus into the new row's first field, so typing goes there and not to the button", () => {
    render(<Harness initial={[parameters]} />);
    const add = screen.getByRole("button", { name: "+ Add parameter" });
    add.focus();
    fireEvent.click(add);
    expect(document.activeElement).toBe(screen.getByRole("textbox", { name: "Name, parameter 3" }));
  });

  it("moves the focus into a new definition's name, before its expression editor", () => {
    const definitions: TableCell = { id: "d", kind: "definitions", collapsed: false, rows: [] };
    render(<Harness initial={[definitions]} />);
    fireEvent.click(screen.getByRole("button", { name: "+ Add definition" }));
    expect(document.activeElement).toBe(screen.getByRole("textbox", { name: "Name, definition 1" }));
  });

  it("states the coordinate limit and refuses a 31st coordinate when it is added", () => {
    const rows = Array.from({ length: 29 }, (_, i) => ({ id: `q${i + 1}`, name: `q${i + 1}`, unit: "m", description: "" }));
    const coordinates: TableCell = { id: "c", kind: "coordinates", collapsed: false, rows };
    render(<Harness initial={[coordinates]} />);
    expect(screen.getByTestId("row-limit").textContent).toBe("29 of at most 30");
    const add = screen.getByRole("button", { name: "+ Add coordinate" });
    fireEvent.click(add);
    expect(screen.getByRole("textbox", { name: "Name, coordinate 30" })).toBeTruthy();
    expect((add as HTMLButtonElement).disabled).toBe(true);
    expect(screen.getByTestId("row-limit").textContent).toBe("A derivation holds at most 30 coordinates. Remove one to add another.");
    fireEvent.click(add);
    expect(screen.queryByRole("textbox", { name: "Name, coordinate 31" })).toBeNull();
  });
});

describe("names", () => {
  it("reads a Greek letter typed as a name as the name it renders", () => {
    const coordinates: TableCell = { id: "c", kind: "coordinates", collapsed: false, rows: [{ id: "q", name: "", unit: "rad", description: "" }] };
    const onOp = vi.fn();
    render(<Harness initial={[coordinates]} onOp={onOp} />);
    const name = screen.getByRole("textbox", { name: "Name, coordinate 1" }) as HTMLInputElement;
    fireEvent.change(name, { target: { value: "θ1" } });
    expect(onOp).toHaveBeenLastCalledWith({ type: "updateRow", cellId: "c", rowId: "q", patch: { name: "theta1" } });
    expect(name.value).toBe("theta1");
    expect(name.getAttribute("aria-invalid")).toBeNull();
  });

  it("shows placeholders as worded examples, not as values", () => {
    const coordinates: TableCell = { id: "c", kind: "coordinates", collapsed: false, rows: [{ id: "q", name: "", unit: "", description: "" }] };
    render(<Harness initial={[coordinates]} />);
    const name = screen.getByRole("textbox", { name: "Name, coordinate 1" }) as HTMLInputElement;
    expect(name.value).toBe("");
    expect(name.placeholder).toBe("e.g. theta");
    expect(name.className).toContain("placeholder:italic");
  });
});
