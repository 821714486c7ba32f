// @vitest-environment jsdom
import { afterEach, describe, expect, it, vi } from "vitest";
import { configure, cleanup, createEvent, fireEvent, render, screen, within } from "@testing-library/react";
import { useState } from "react";
import { Notebook } from "@/components/notebook/notebook";
import { NoteCellEditor } from "@/components/notebook/note-cell";
import { createCell, documentToModel, modelToDocument, type DerivationDocument, type DocumentOperation } from "@/lib/notebook/document";
import { templateModel } from "@/lib/notebook/templates";

afterEach(cleanup);
// Editors lint after a pause and KaTeX loads on first use; allow for a busy machine.
configure({ asyncUtilTimeout: 5000 });

function counter(prefix: string) {
  let n = 0;
  return () => `${prefix}${++n}`;
}

function Harness({ initial, onOp, readOnly }: { initial: DerivationDocument; onOp?: (op: DocumentOperation) => void; readOnly?: boolean }) {
  const [doc, setDoc] = useState(initial);
  return (
    <Notebook
      document={doc}
      readOnly={readOnly}
      newId={counter("new")}
      onChange={(next, op) => {
        onOp?.(op);
        setDoc(next);
      }}
    />
  );
}

const pendulum = () => modelToDocument(templateModel("single-pendulum"), counter("c"));
const order = () => [...document.querySelectorAll<HTMLElement>("[data-cell-id]")].map((el) => el.dataset.cellId);

describe("Notebook", () => {
  it("renders every cell with its kind and an accessible name", () => {
    render(<Harness initial={pendulum()} />);
    expect(order()).toEqual(["c1", "c2", "c3", "c4", "c5", "c6"]);
    expect(screen.getByRole("region", { name: "Kinetic energy, cell 3 of 6" })).toBeTruthy();
    expect(screen.getByRole("textbox", { name: "Kinetic energy T" })).toBeTruthy();
  });

  it("reorders with Alt+↑ and Alt+↓ from inside a cell and keeps the focus there", () => {
    render(<Harness initial={pendulum()} />);
    const unit = screen.getByRole("textbox", { name: "Unit, coordinate 1" });
    unit.focus();
    fireEvent.keyDown(unit, { key: "ArrowDown", altKey: true });
    expect(order()).toEqual(["c2", "c1", "c3", "c4", "c5", "c6"]);
    expect(document.activeElement).toBe(unit);
    fireEvent.keyDown(unit, { key: "ArrowDown", altKey: true });
    fireEvent.keyDown(unit, { key: "ArrowUp", altKey: true });
    expect(order()).toEqual(["c2", "c1", "c3", "c4", "c5", "c6"]);
    // At the top, moving up does nothing.
    fireEvent.keyDown(screen.getByRole("textbox", { name: "Unit, parameter 1" }), { key: "ArrowUp", altKey: true });
    expect(order()).toEqual(["c2", "c1", "c3", "c4", "c5", "c6"]);
  });

  it("reorders by dragging a cell onto the lower half of another", () => {
    const onOp = vi.fn();
    render(<Harness initial={pendulum()} onOp={onOp} />);
    const handle = within(screen.getByTestId("cell-c1")).getByTestId("drag-handle");
    const target = screen.getByTestId("cell-c4");
    target.getBoundingClientRect = () => ({ top: 100, height: 40, bottom: 140, left: 0, right: 100, width: 100, x: 0, y: 100, toJSON: () => ({}) });
    const dataTransfer = {
      data: {} as Record<string, string>,
      types: ["text/plain"],
      setData(type: string, value: string) {
        this.data[type] = value;
      },
      getData(type: string) {
        return this.data[type] ?? "";
      },
      effectAllowed: "",
      dropEffect: "",
    };
    fireEvent.dragStart(handle, { dataTransfer });
    fireEvent.dragOver(target, { dataTransfer, clientY: 135 });
    expect(target.classList.contains("hn-drop-after")).toBe(true);
    const dropEvent = createEvent.drop(target, { dataTransfer });
    Object.defineProperty(dropEvent, "clientY", { value: 135 });
    fireEvent(target, dropEvent);
    expect(onOp).toHaveBeenLastCalledWith({ type: "moveCell", cellId: "c1", toIndex: 3 });
    expect(order()).toEqual(["c2", "c3", "c4", "c1", "c5", "c6"]);
  });

  it("adds a cell of a chosen kind and refuses a second kinetic energy", () => {
    render(<Harness initial={pendulum()} />);
    fireEvent.click(screen.getByRole("button", { name: "Add cell" }));
    const kinds = screen.getByRole("group", { name: "Cell kinds" });
    expect((within(kinds).getByRole("button", { name: "Kinetic energy" }) as HTMLButtonElement).disabled).toBe(true);
    fireEvent.click(within(kinds).getByRole("button", { name: "Dissipation function" }));
    expect(order()).toEqual(["c1", "c2", "c3", "c4", "c5", "c6", "new1"]);
    // The new cell takes the focus, so typing goes into it and not to the picker's button.
    expect(document.activeElement).toBe(screen.getByRole("textbox", { name: "Dissipation function D" }));
  });

  it("moves the focus to a new table cell's add button, the first control it has", () => {
    render(<Harness initial={pendulum()} />);
    fireEvent.click(screen.getByRole("button", { name: "Add cell" }));
    fireEvent.click(within(screen.getByRole("group", { name: "Cell kinds" })).getByRole("button", { name: "Inputs" }));
    expect(document.activeElement).toBe(screen.getByRole("button", { name: "+ Add input" }));
    fireEvent.click(screen.getByRole("button", { name: "+ Add input" }));
    expect(document.activeElement).toBe(screen.getByRole("textbox", { name: "Name, input 1" }));
  });

  it("lists the evaluator's general problems in the labels the analyst sees", () => {
    const doc = pendulum();
    render(
      <Notebook
        document={doc}
        onChange={() => {}}
        diagnostics={[{ code: "too_large", field: "model", column: null, length: 1, message: "the expressions are too long" }]}
      />,
    );
    expect(screen.getByRole("alert").textContent).toContain("The model: the expressions are too long");
  });

  it("duplicates from the menu and deletes with Alt+Shift+Backspace, with an undo", () => {
    render(<Harness initial={pendulum()} />);
    fireEvent.click(screen.getByRole("button", { name: "Actions for Parameters" }));
    expect((screen.getByRole("menuitem", { name: /Move up/ }) as HTMLButtonElement).disabled).toBe(false);
    fireEvent.click(screen.getByRole("menuitem", { name: /Duplicate/ }));
    expect(order()).toEqual(["c1", "c2", "new1", "c3", "c4", "c5", "c6"]);

    const inCopy = within(screen.getByTestId("cell-new1")).getByRole("textbox", { name: "Name, parameter 1" });
    fireEvent.keyDown(inCopy, { key: "Backspace", altKey: true, shiftKey: true });
    expect(order()).toEqual(["c1", "c2", "c3", "c4", "c5", "c6"]);
    fireEvent.click(screen.getByRole("button", { name: "Undo" }));
    expect(order()).toEqual(["c1", "c2", "new1", "c3", "c4", "c5", "c6"]);
  });

  it("collapses and expands a cell, keeping its content in the document", () => {
    const onOp = vi.fn();
    render(<Harness initial={pendulum()} onOp={onOp} />);
    fireEvent.click(screen.getByRole("button", { name: "Collapse Kinetic energy" }));
    expect(screen.queryByRole("textbox", { name: "Kinetic energy T" })).toBeNull();
    expect(onOp).toHaveBeenLastCalledWith({ type: "setCollapsed", cellId: "c3", collapsed: true });
    fireEvent.click(screen.getByRole("button", { name: "Expand Kinetic energy" }));
    expect(screen.getByRole("textbox", { name: "Kinetic energy T" })).toBeTruthy();
  });

  it("emits operations whose document still converts to the same model", () => {
    let latest: DerivationDocument | null = null;
    render(<Notebook document={pendulum()} onChange={(next) => (latest = next)} />);
    fireEvent.change(screen.getByRole("textbox", { name: "Value, parameter 2" }), { target: { value: "4" } });
    expect(documentToModel(latest!).parameters[1]).toEqual({ name: "l", unit: "m", value: 4, description: "cable length" });
  });

  it("offers no editing controls when read-only", () => {
    render(<Harness initial={pendulum()} readOnly />);
    expect(screen.queryByRole("button", { name: "Add cell" })).toBeNull();
    expect(screen.queryByRole("button", { name: /Actions for/ })).toBeNull();
    expect(screen.queryByTestId("drag-handle")).toBeNull();
    expect(screen.getByRole("textbox", { name: "Name, coordinate 1" }).hasAttribute("readonly")).toBe(true);
  });
});

describe("note cell", () => {
  it("renders Markdown with math and strips anything executable", async () => {
    const cell = {
      ...createCell("note", "n"),
      markdown:
        '**Sway** at $\\omega = \\sqrt{g/l}$.\n\n$$T = \\tfrac12 m l^2 \\dot\\theta^2$$\n\n<script>window.bad = 1</script><img src=x onerror="window.bad=1"> [x](javascript:alert(1))',
    };
    render(<NoteCellEditor cell={cell} onOperation={() => {}} />);
    const rendered = await screen.findByTestId("note-rendered");
    expect(rendered.querySelector("strong")?.textContent).toBe("Sway");
    expect(rendered.querySelectorAll(".katex")).toHaveLength(2);
    expect(rendered.querySelector(".hn-math-display .katex-display")).not.toBeNull();
    expect(rendered.querySelector("script")).toBeNull();
    // The handler is stripped, and an image from outside the file store is dropped altogether.
    expect(rendered.querySelector("img[onerror]")).toBeNull();
    expect(rendered.querySelector("a")?.getAttribute("href") ?? "").not.toMatch(/javascript/i);
  });

  it("renders a note's headings below the page's h1 and the cell's h3", async () => {
    render(<NoteCellEditor cell={{ ...createCell("note", "n"), markdown: "# Assumptions\n\n## Loads\n\ntext" }} onOperation={() => {}} />);
    const rendered = await screen.findByTestId("note-rendered");
    expect(rendered.querySelector("h1")).toBeNull();
    expect(rendered.querySelector("h4.hn-note-h1")?.textContent).toBe("Assumptions");
    expect(rendered.querySelector("h5.hn-note-h2")?.textContent).toBe("Loads");
  });

  it("leaves prices alone and edits through setNote", () => {
    const onOperation = vi.fn();
    render(<NoteCellEditor cell={{ ...createCell("note", "n"), markdown: "Costs $5 and $6." }} onOperation={onOperation} />);
    return screen.findByTestId("note-rendered").then((rendered) => {
      expect(rendered.querySelector(".katex")).toBeNull();
      fireEvent.click(screen.getByRole("button", { name: "Edit" }));
      fireEvent.change(screen.getByRole("textbox", { name: "Note (Markdown, $math$)" }), { target: { value: "New" } });
      expect(onOperation).toHaveBeenCalledWith({ type: "setNote", cellId: "n", markdown: "New" });
    });
  });
});
