// @vitest-environment jsdom
import { afterEach, describe, expect, it } from "vitest";
import { cleanup, fireEvent, render, screen } from "@testing-library/react";
import { useState } from "react";
import { SimulationSettingsForm } from "@/components/notebook/simulation/simulation-cell";
import { validateSettings } from "@/components/notebook/simulation/settings";
import {
  DEFAULT_SIMULATION_SETTINGS as DEFAULT_SETTINGS,
  applyOperation,
  createCell,
  documentSymbols,
  modelToDocument,
  type DerivationDocument,
  type DocumentOperation,
  type SimulationCell,
} from "@/lib/notebook/document";
import { templateModel } from "@/lib/notebook/templates";

afterEach(cleanup);

const symbols = { coordinates: ["x", "theta"], parameters: ["M", "m", "l"], inputs: ["F"], definitions: ["xL", "yL"] };

describe("simulation settings validation", () => {
  it("turns valid text into the run request, blanks meaning zero", () => {
    const settings = {
      ...DEFAULT_SETTINGS,
      initialCoordinates: { theta: "0.3" },
      initialRates: { x: "-1.5" },
      inputs: { F: " 50*sin(t) " },
      parameterOverrides: { m: "900", l: "" },
      points: [{ x: "xL", y: "yL" }],
    };
    const result = validateSettings(settings, symbols);
    expect(result.ok).toBe(true);
    if (!result.ok) return;
    expect(result.request.initialCoordinates).toEqual({ x: 0, theta: 0.3 });
    expect(result.request.initialRates).toEqual({ x: -1.5, theta: 0 });
    expect(result.request).toMatchObject({ startTime: 0, endTime: 10, outputStep: 0.01, relativeTolerance: 1e-8, absoluteTolerance: 1e-10 });
    expect(result.request.inputs).toEqual({ F: "50*sin(t)" });
    // A blank override keeps the Parameters cell's value.
    expect(result.request.parameters).toEqual({ m: 900 });
    expect(result.points).toEqual([{ x: "xL", y: "yL" }]);
  });

  it("names every bad field", () => {
    const settings = {
      ...DEFAULT_SETTINGS,
      initialCoordinates: { x: "1..2" },
      startTime: "5",
      endTime: "2",
      outputStep: "-0.1",
      tolerance: "1",
      parameterOverrides: { m: "heavy" },
      points: [{ x: "xL", y: "hook" }],
    };
    const result = validateSettings(settings, symbols);
    expect(result.ok).toBe(false);
    if (result.ok) return;
    expect(result.errors).toEqual({
      "initialCoordinates.x": '"1..2" is not a number.',
      endTime: "Must be after the start time.",
      outputStep: "Must be positive.",
      tolerance: "Between 1e-14 and 1e-2.",
      "parameterOverrides.m": '"heavy" is not a number.',
      "points.0.y": '"hook" is not a definition or coordinate.',
    });
  });

  it("refuses an output grid finer than the point limit and a blank end time", () => {
    expect(validateSettings({ ...DEFAULT_SETTINGS, endTime: "1000", outputStep: "1e-4" }, symbols)).toMatchObject({
      ok: false,
      errors: { outputStep: expect.stringContaining("Too fine") },
    });
    expect(validateSettings({ ...DEFAULT_SETTINGS, endTime: " " }, symbols)).toMatchObject({ ok: false, errors: { endTime: "Required." } });
  });
});

function Harness({ initial, cellId, errors = {} }: { initial: DerivationDocument; cellId: string; errors?: Record<string, string> }) {
  const [doc, setDoc] = useState(initial);
  const cell = doc.cells.find((c) => c.id === cellId) as SimulationCell;
  return (
    <>
      <SimulationSettingsForm cell={cell} document={doc} errors={errors} onOperation={(op: DocumentOperation) => setDoc((d) => applyOperation(d, op))} />
      <output data-testid="stored">{JSON.stringify(cell.settings)}</output>
    </>
  );
}

describe("simulation settings form", () => {
  const base = modelToDocument(
    templateModel("single-pendulum"),
    (() => {
      let i = 0;
      return () => `id${++i}`;
    })(),
  );
  const doc = applyOperation(base, { type: "addCell", cell: createCell("simulation", "sim") });

  it("stores what is typed in the cell's settings through document operations", () => {
    render(<Harness initial={doc} cellId="sim" />);
    fireEvent.change(screen.getByLabelText("theta(t₀)"), { target: { value: "0.5" } });
    fireEvent.change(screen.getByLabelText("End time (s)"), { target: { value: "4" } });
    const stored = JSON.parse(screen.getByTestId("stored").textContent!);
    expect(stored).toMatchObject({ initialCoordinates: { theta: "0.5" }, endTime: "4" });
    // One field per coordinate and rate, one override per parameter of the template.
    expect(screen.getByLabelText("theta'(t₀)")).toBeTruthy();
    for (const name of documentSymbols(doc).parameters) expect(screen.getByLabelText(name)).toBeTruthy();
  });

  it("suggests the model's positions with + Add point: the trolley on its girder first, then the load", () => {
    const crane = applyOperation(
      modelToDocument(
        templateModel("cart-with-pendulum"),
        (() => {
          let i = 0;
          return () => `c${++i}`;
        })(),
      ),
      { type: "addCell", cell: createCell("simulation", "sim") },
    );
    render(<Harness initial={crane} cellId="sim" />);
    const add = screen.getByRole("button", { name: "+ Add point" });
    fireEvent.click(add);
    fireEvent.click(add);
    expect(JSON.parse(screen.getByTestId("stored").textContent!).points).toEqual([
      { x: "x", y: "0" },
      { x: "xL", y: "yL" },
    ]);
    expect((screen.getByLabelText("Point 1 x") as HTMLSelectElement).value).toBe("x");
    expect((screen.getByLabelText("Point 1 y") as HTMLSelectElement).value).toBe("0");
    // Nothing left to suggest: a third point starts empty.
    fireEvent.click(add);
    expect(JSON.parse(screen.getByTestId("stored").textContent!).points[2]).toEqual({ x: "", y: "" });
    // A coordinate and the fixed zero are valid point names; the empty point is left out of the run.
    const valid = validateSettings(JSON.parse(screen.getByTestId("stored").textContent!), documentSymbols(crane));
    expect(valid.ok && valid.points).toEqual([
      { x: "x", y: "0" },
      { x: "xL", y: "yL" },
    ]);
  });

  it("shows a field's error beside it and marks it invalid", () => {
    render(<Harness initial={doc} cellId="sim" errors={{ outputStep: "Must be positive." }} />);
    const field = screen.getByLabelText("Output step (s)");
    expect(field.getAttribute("aria-invalid")).toBe("true");
    expect(document.getElementById(field.getAttribute("aria-describedby")!)?.textContent).toBe("Must be positive.");
  });
});
