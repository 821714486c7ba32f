// @vitest-environment jsdom
import { afterEach, describe, expect, it } from "vitest";
import { cleanup, fireEvent, render, screen, within } from "@testing-library/react";
import { useState } from "react";
import { StudySettingsForm, newParameterEntry, studyModelNames } from "@/components/notebook/study/study-settings-form";
import { applyOperation, type DerivationDocument, type DocumentOperation, type StudyCell } from "@/lib/notebook/document";
import { studyDocument } from "./fixtures";

afterEach(cleanup);

function Harness({
  initial,
  cellId,
  errors,
  onOperation,
}: {
  initial: DerivationDocument;
  cellId: string;
  errors?: Record<string, string>;
  onOperation?: (op: DocumentOperation) => void;
}) {
  const [doc, setDoc] = useState(initial);
  const cell = doc.cells.find((c) => c.id === cellId) as StudyCell;
  return (
    <>
      <StudySettingsForm
        cellId={cellId}
        settings={cell.settings}
        document={doc}
        errors={errors}
        onOperation={(op) => {
          onOperation?.(op);
          setDoc((current) => applyOperation(current, op));
        }}
      />
      <output data-testid="settings">{JSON.stringify(cell.settings)}</output>
    </>
  );
}

const settingsOf = () => JSON.parse(screen.getByTestId("settings").textContent!) as StudyCell["settings"];

describe("study settings form", () => {
  it("reads the names a study may vary and watch from the model", () => {
    const { doc } = studyDocument();
    const names = studyModelNames(doc);
    expect(names.parameters.map((p) => p.name)).toEqual(["M", "m", "l", "g"]);
    expect(names.outputs).toEqual([
      { name: "rope_tension", unit: "N" },
      { name: "side_load", unit: "N" },
    ]);
    expect(names.multipliers).toEqual(["lambda_rope"]);
    expect(names.coordinates).toEqual(["x", "xl", "yl"]);
    expect(names.inputs).toEqual(["a"]);
  });

  it("starts a new parameter ±5 % around its nominal value", () => {
    expect(newParameterEntry("l", "5")).toMatchObject({ values: "4.75, 5, 5.25", min: "4.75", max: "5.25", mean: "5" });
    expect(newParameterEntry("k", "")).toMatchObject({ values: "", min: "", max: "" });
  });

  it("edits parameters, cases, times and watched names as settings operations, and counts the runs", () => {
    const { doc, cellId } = studyDocument();
    const ops: DocumentOperation[] = [];
    render(<Harness initial={doc} cellId={cellId} onOperation={(op) => ops.push(op)} />);
    expect(screen.getByTestId("study-run-count").textContent).toContain("Total runs: 1");

    fireEvent.click(screen.getByRole("button", { name: "+ Add parameter" }));
    // The first parameter not yet chosen is taken, with the grid spread around its value.
    expect(settingsOf().parameters).toEqual([newParameterEntry("M", "400")]);
    fireEvent.change(screen.getByLabelText("Parameter"), { target: { value: "m" } });
    fireEvent.change(screen.getByLabelText(/^Values/), { target: { value: "500:2000:4" } });
    expect(settingsOf().parameters[0]).toMatchObject({ name: "m", values: "500:2000:4" });

    fireEvent.click(screen.getByRole("button", { name: "+ Add case" }));
    const cases = screen.getAllByTestId("study-case");
    expect(cases).toHaveLength(2);
    fireEvent.change(within(cases[1]!).getByLabelText("Case name"), { target: { value: "emergency stop" } });
    fireEvent.change(within(cases[1]!).getByLabelText("x'(t₀)"), { target: { value: "1.2" } });
    expect(settingsOf().cases[1]).toEqual({ name: "emergency stop", initialCoordinates: {}, initialRates: { x: "1.2" }, inputs: {} });
    expect(screen.getByTestId("study-run-count").textContent).toContain("Total runs: 8");

    fireEvent.change(screen.getByLabelText("End time (s)"), { target: { value: "20" } });
    fireEvent.click(screen.getByRole("checkbox", { name: /rope_tension/ }));
    fireEvent.click(screen.getByRole("checkbox", { name: "lambda_rope" }));
    expect(settingsOf()).toMatchObject({ endTime: "20", watch: ["rope_tension", "lambda_rope"] });
    fireEvent.click(screen.getByRole("checkbox", { name: /rope_tension/ }));
    expect(settingsOf().watch).toEqual(["lambda_rope"]);

    // Every edit is one settings operation on this cell, as the shared document takes them.
    expect(ops.every((op) => op.type === "updateSettings" && op.cellId === cellId)).toBe(true);
  });

  it("switches to a tolerance run with samples, seed and distributions", () => {
    const { doc, cellId } = studyDocument();
    render(<Harness initial={doc} cellId={cellId} />);
    fireEvent.click(screen.getByRole("button", { name: "+ Add parameter" }));
    fireEvent.click(screen.getByRole("radio", { name: /Tolerance run/ }));
    expect(screen.queryByLabelText(/^Values/)).toBeNull();
    fireEvent.change(screen.getByLabelText("Samples per case"), { target: { value: "250" } });
    fireEvent.change(screen.getByLabelText("Seed"), { target: { value: "7" } });
    fireEvent.change(screen.getByLabelText("Distribution"), { target: { value: "normal" } });
    fireEvent.change(screen.getByLabelText("Standard deviation"), { target: { value: "10" } });
    expect(settingsOf()).toMatchObject({
      mode: "tolerance",
      samples: "250",
      seed: "7",
      parameters: [{ name: "M", distribution: "normal", sd: "10", mean: "400" }],
    });
    expect(screen.getByTestId("study-run-count").textContent).toContain("Total runs: 250");
    fireEvent.change(screen.getByLabelText("Samples per case"), { target: { value: "6000" } });
    expect(screen.getByTestId("study-run-count").textContent).toContain("over the limit of 5,000 runs");
  });

  it("shows the server's field errors beside their fields, and lists those it has no place for", () => {
    const { doc, cellId } = studyDocument();
    const cell = doc.cells.find((c) => c.id === cellId) as StudyCell;
    const withEntries: DerivationDocument = {
      ...doc,
      cells: doc.cells.map((c) =>
        c.id === cellId ? { ...cell, settings: { ...cell.settings, parameters: [newParameterEntry("l", "5")], watch: ["rope_tension", "hook_load"] } } : c,
      ),
    };
    render(
      <Harness
        initial={withEntries}
        cellId={cellId}
        errors={{
          "parameters.0.values": '"4.75, five" is not a list of numbers.',
          "cases.0.initialCoordinates.x": '"1..2" is not a number.',
          "watch.1": "hook_load is not an output, multiplier or coordinate of the model.",
          endTime: "Must be after the start time.",
          "cases.0.inputs.b": "b is not an input.",
        }}
      />,
    );
    const values = screen.getByLabelText(/^Values/);
    expect(values.getAttribute("aria-invalid")).toBe("true");
    expect(document.getElementById(values.getAttribute("aria-describedby")!)!.textContent).toBe('"4.75, five" is not a list of numbers.');
    const x0 = screen.getByLabelText("x(t₀)");
    expect(document.getElementById(x0.getAttribute("aria-describedby")!)!.textContent).toBe('"1..2" is not a number.');
    expect(screen.getByText("2 fields to correct")).toBeTruthy();
    // A watched name that left the model stays listed, with its error, so it can be unticked.
    const stale = screen.getByRole("checkbox", { name: "hook_load" });
    expect(stale.getAttribute("aria-invalid")).toBe("true");
    expect(screen.getByLabelText("End time (s)").getAttribute("aria-invalid")).toBe("true");
    expect(screen.getByTestId("study-unplaced-errors").textContent).toBe("cases.0.inputs.b: b is not an input.");
  });
});
