import { describe, expect, it } from "vitest";
import {
  DEFAULT_SIMULATION_SETTINGS,
  DOCUMENT_SCHEMA_VERSION,
  DocumentError,
  addCell,
  addRow,
  applyOperation,
  blankDocument,
  canAddCell,
  createCell,
  deleteCell,
  deleteRow,
  documentSymbols,
  documentToModel,
  duplicateCell,
  locateModelField,
  modelToDocument,
  moveCell,
  moveCellBy,
  moveRow,
  parseStoredDocument,
  setCellTitle,
  setCollapsed,
  setExpression,
  setForce,
  setNote,
  updateRow,
  updateSettings,
  type DerivationDocument,
  type DocumentOperation,
} from "@/lib/notebook/document";
import type { Model } from "@/lib/mechanics";

function counter(prefix = "c"): () => string {
  let n = 0;
  return () => `${prefix}${++n}`;
}

const doublePendulum: Model = {
  title: "Double pendulum",
  coordinates: [
    { name: "theta1", unit: "rad" },
    { name: "theta2", unit: "rad", description: "lower link" },
  ],
  parameters: [
    { name: "m1", unit: "kg", value: 1.0 },
    { name: "l1", unit: "m", value: 0.75 },
    { name: "g", unit: "m/s^2", value: 9.81 },
    { name: "c", unit: "N*m*s" },
  ],
  inputs: [{ name: "u", unit: "N*m" }],
  definitions: [
    { name: "x1", expr: "l1*sin(theta1)" },
    { name: "y1", expr: "-l1*cos(theta1)", description: "height of the first mass" },
  ],
  kinetic: "1/2*m1*(x1'^2 + y1'^2)",
  potential: "m1*g*y1",
  dissipation: "1/2*c*theta1'^2",
  forces: { theta1: "u" },
};

describe("blank document", () => {
  it("holds the cells a derivation needs, empty, at the current schema version", () => {
    const doc = blankDocument("Trolley", counter());
    expect(doc.schemaVersion).toBe(DOCUMENT_SCHEMA_VERSION);
    expect(doc.cells.map((cell) => cell.kind)).toEqual(["coordinates", "parameters", "definitions", "kinetic", "potential", "equations"]);
    expect(doc.cells.map((cell) => cell.id)).toEqual(["c1", "c2", "c3", "c4", "c5", "c6"]);
    expect(documentToModel(doc)).toEqual({ title: "Trolley", coordinates: [], parameters: [], kinetic: "", potential: "" });
  });
});

describe("cell operations", () => {
  const base = () => blankDocument("Ops", counter());

  it("adds at an index, refuses a duplicate id and a second singleton", () => {
    const doc = addCell(base(), createCell("note", "n1"), 1);
    expect(doc.cells[1]!.id).toBe("n1");
    expect(() => addCell(doc, createCell("note", "n1"))).toThrow(DocumentError);
    expect(canAddCell(doc, "kinetic")).toBe(false);
    expect(canAddCell(doc, "note")).toBe(true);
    expect(() => addCell(doc, createCell("kinetic", "k2"))).toThrow(/already has a kinetic energy cell/);
  });

  it("never mutates its argument", () => {
    const doc = base();
    const snapshot = structuredClone(doc);
    setExpression(doc, "c4", "1/2*m*x'^2");
    moveCell(doc, "c1", 4);
    deleteCell(doc, "c2");
    setCollapsed(doc, "c3", true);
    addRow(doc, "c1", { id: "r1", name: "x", unit: "m", description: "" });
    expect(doc).toEqual(snapshot);
  });

  it("deletes, moves, and moves by one with no-ops at the ends", () => {
    let doc = deleteCell(base(), "c3");
    expect(doc.cells.map((c) => c.id)).toEqual(["c1", "c2", "c4", "c5", "c6"]);
    doc = moveCell(doc, "c1", 2);
    expect(doc.cells.map((c) => c.id)).toEqual(["c2", "c4", "c1", "c5", "c6"]);
    doc = moveCell(doc, "c6", 0);
    expect(doc.cells.map((c) => c.id)).toEqual(["c6", "c2", "c4", "c1", "c5"]);
    expect(moveCellBy(doc, "c6", -1)).toBe(doc);
    expect(moveCellBy(doc, "c5", 1)).toBe(doc);
    expect(moveCellBy(doc, "c4", -1).cells.map((c) => c.id)).toEqual(["c6", "c4", "c2", "c1", "c5"]);
    expect(() => deleteCell(doc, "missing")).toThrow(DocumentError);
  });

  it("duplicates a cell with its content right below the original", () => {
    let doc = addRow(base(), "c2", { id: "p1", name: "m", unit: "kg", value: "2", description: "" });
    doc = setCollapsed(doc, "c2", true);
    doc = duplicateCell(doc, "c2", "copy");
    expect(doc.cells.map((c) => c.id)).toEqual(["c1", "c2", "copy", "c3", "c4", "c5", "c6"]);
    expect(doc.cells[2]).toEqual({ ...doc.cells[1], id: "copy" });
    // The copy is independent of the original.
    doc = updateRow(doc, "copy", "p1", { value: "3" });
    expect(documentSymbols(doc).parameters).toEqual(["m", "m"]);
    expect((doc.cells[1] as { rows: { value: string }[] }).rows[0]!.value).toBe("2");
    expect(() => duplicateCell(doc, "c4", "k2")).toThrow(/already has/);
  });

  it("sets titles, notes and expressions only on cells that have them", () => {
    let doc = addCell(base(), createCell("note", "n"));
    doc = setNote(doc, "n", "Load sways at $\\omega = \\sqrt{g/l}$");
    doc = setCellTitle(doc, "c4", "Trolley and load");
    expect(doc.cells.find((c) => c.id === "c4")!.title).toBe("Trolley and load");
    expect(setCellTitle(doc, "c4", "  ").cells.find((c) => c.id === "c4")).not.toHaveProperty("title");
    expect(() => setExpression(doc, "n", "x")).toThrow(DocumentError);
    expect(() => setNote(doc, "c4", "x")).toThrow(DocumentError);
    expect(() => addRow(doc, "c4", { id: "r", name: "", unit: "", description: "" })).toThrow(/has no rows/);
  });

  it("edits rows: add, update known fields only, delete, move", () => {
    let doc = addRow(base(), "c1", { id: "a", name: "x", unit: "m", description: "" });
    doc = addRow(doc, "c1", { id: "b", name: "theta", unit: "rad", description: "" });
    doc = addRow(doc, "c1", { id: "z", name: "phi", unit: "rad", description: "" }, 0);
    doc = moveRow(doc, "c1", "z", 2);
    expect(documentSymbols(doc).coordinates).toEqual(["x", "theta", "phi"]);
    doc = updateRow(doc, "c1", "b", { unit: "rad", description: "rope angle" });
    expect(() => updateRow(doc, "c1", "b", { value: "1" })).toThrow(/no field "value"/);
    expect(() => updateRow(doc, "c1", "nope", { name: "q" })).toThrow(DocumentError);
    doc = deleteRow(doc, "c1", "a");
    expect(documentSymbols(doc).coordinates).toEqual(["theta", "phi"]);
  });

  it("carries a generalized force along when its coordinate is renamed", () => {
    let doc = addRow(base(), "c1", { id: "a", name: "x", unit: "m", description: "" });
    doc = addCell(doc, createCell("forces", "f"));
    doc = setForce(doc, "f", "x", "F");
    doc = updateRow(doc, "c1", "a", { name: "s" });
    expect(documentToModel(doc).forces).toEqual({ s: "F" });
    // Blank entries stay in the document (the editor keeps its text) but are left out of the model.
    doc = setForce(doc, "f", "s", "");
    expect(documentToModel(doc)).not.toHaveProperty("forces");
  });

  it("validates settings of generated cells", () => {
    let doc = addCell(base(), createCell("linearization", "lin"));
    doc = updateSettings(doc, "lin", { equilibriumIndex: 2, inputValues: { F: "0" } });
    expect(doc.cells.find((c) => c.id === "lin")).toMatchObject({ settings: { equilibriumIndex: 2, inputValues: { F: "0" } } });
    expect(() => updateSettings(doc, "lin", { equilibriumIndex: -1 })).toThrow(DocumentError);
    doc = addCell(doc, createCell("code-export", "code"));
    expect(() => updateSettings(doc, "code", { language: "cobol" })).toThrow(DocumentError);
    expect(() => updateSettings(doc, "c1", { form: "residual" })).toThrow(/has no settings/);
  });

  it("gives a new simulation cell the default settings and keeps its settings typed", () => {
    let doc = addCell(base(), createCell("simulation", "sim"));
    expect(doc.cells.find((c) => c.id === "sim")).toMatchObject({ settings: DEFAULT_SIMULATION_SETTINGS });
    doc = updateSettings(doc, "sim", { endTime: "4", initialCoordinates: { theta: "0.2" } });
    expect(doc.cells.find((c) => c.id === "sim")).toMatchObject({
      settings: { ...DEFAULT_SIMULATION_SETTINGS, endTime: "4", initialCoordinates: { theta: "0.2" } },
    });
    expect(() => updateSettings(doc, "sim", { endTime: 4 })).toThrow(DocumentError);
    expect(() => updateSettings(doc, "sim", { solver: "rk4" })).toThrow(DocumentError);
    // The defaults object is never shared with a cell.
    expect(createCell("simulation").settings).not.toBe(DEFAULT_SIMULATION_SETTINGS);
  });

  it("applies operations given as data the same as the functions", () => {
    const ops: DocumentOperation[] = [
      { type: "setTitle", title: "Gimbal" },
      { type: "addRow", cellId: "c1", row: { id: "r1", name: "psi", unit: "rad", description: "" } },
      { type: "updateRow", cellId: "c1", rowId: "r1", patch: { description: "yaw" } },
      { type: "addRow", cellId: "c2", row: { id: "r1", name: "J", unit: "kg*m^2", value: "0.02", description: "" } },
      { type: "setExpression", cellId: "c4", expr: "1/2*J*psi'^2" },
      { type: "setExpression", cellId: "c5", expr: "0" },
      { type: "addCell", cell: createCell("note", "n"), index: 0 },
      { type: "setNote", cellId: "n", markdown: "Yaw axis only." },
      { type: "duplicateCell", cellId: "n", newCellId: "n2" },
      { type: "deleteCell", cellId: "n2" },
      { type: "moveCell", cellId: "n", toIndex: 6 },
      { type: "setCollapsed", cellId: "c3", collapsed: true },
      { type: "setCellTitle", cellId: "c3", title: "Positions" },
      { type: "updateSettings", cellId: "c6", patch: { form: "mass-matrix" } },
    ];
    const doc = ops.reduce(applyOperation, blankDocument("x", counter()));
    expect(documentToModel(doc)).toEqual({
      title: "Gimbal",
      coordinates: [{ name: "psi", unit: "rad", description: "yaw" }],
      parameters: [{ name: "J", unit: "kg*m^2", value: 0.02 }],
      kinetic: "1/2*J*psi'^2",
      potential: "0",
    });
    expect(doc.cells.map((c) => c.kind)).toEqual(["coordinates", "parameters", "definitions", "kinetic", "potential", "equations", "note"]);
    expect(parseStoredDocument(JSON.parse(JSON.stringify(doc)))).toEqual({ ok: true, document: doc });
  });
});

describe("model round trip", () => {
  it("documentToModel(modelToDocument(m)) gives m back, optional fields included", () => {
    const doc = modelToDocument(doublePendulum, counter());
    expect(doc.cells.map((c) => c.kind)).toEqual([
      "coordinates",
      "parameters",
      "inputs",
      "definitions",
      "kinetic",
      "potential",
      "dissipation",
      "forces",
      "equations",
      "conserved",
    ]);
    expect(documentToModel(doc)).toEqual(doublePendulum);
  });

  it("round-trips the smallest model, leaving absent optional fields absent", () => {
    const minimal: Model = {
      title: "Mass on a spring",
      coordinates: [{ name: "x", unit: "m" }],
      parameters: [],
      kinetic: "1/2*m*x'^2",
      potential: "1/2*k*x^2",
    };
    const doc = modelToDocument(minimal, counter());
    expect(documentToModel(doc)).toEqual(minimal);
    expect(Object.keys(documentToModel(doc))).toEqual(["title", "coordinates", "parameters", "kinetic", "potential"]);
  });

  it("keeps awkward parameter values exactly", () => {
    const values = [0, -3, 1e-7, 6.02214076e23, 0.1 + 0.2, 123456.789];
    const model: Model = { ...doublePendulum, parameters: values.map((value, i) => ({ name: `p${i}`, unit: "1", value })) };
    expect(documentToModel(modelToDocument(model, counter())).parameters.map((p) => p.value)).toEqual(values);
  });

  it("survives JSON and the stored-document schema", () => {
    const doc = modelToDocument(doublePendulum, counter());
    const stored = parseStoredDocument(JSON.parse(JSON.stringify(doc)));
    expect(stored.ok).toBe(true);
    if (stored.ok) expect(documentToModel(stored.document)).toEqual(doublePendulum);
  });

  it("concatenates table cells of one kind in document order and skips blank rows", () => {
    let doc = modelToDocument(doublePendulum, counter());
    doc = addCell(doc, { ...createCell("parameters", "extra"), rows: [{ id: "q", name: "l2", unit: "m", value: "0.5", description: "" }] }, 2);
    doc = addRow(doc, "c2", { id: "blank", name: "", unit: "", value: "", description: "" }, 0);
    expect(documentToModel(doc).parameters.map((p) => p.name)).toEqual(["m1", "l1", "g", "c", "l2"]);
  });

  it("names the field of a value that is not a number", () => {
    let doc = modelToDocument(doublePendulum, counter());
    doc = updateRow(doc, "c2", "r3", { value: "9.8.1" });
    expect(() => documentToModel(doc)).toThrow(expect.objectContaining({ field: "parameters[2].value" }));
  });
});

describe("locating model fields", () => {
  const doc: DerivationDocument = addRow(modelToDocument(doublePendulum, counter()), "c4", { id: "gap", name: "", expr: "", description: "" }, 0);

  it("maps row fields to the row, skipping blank rows as documentToModel does", () => {
    expect(locateModelField(doc, "definitions[1].expr")).toEqual({ cellId: "c4", rowId: "r2", column: "expr" });
    expect(locateModelField(doc, "parameters[0].unit")).toEqual({ cellId: "c2", rowId: "r1", column: "unit" });
    expect(locateModelField(doc, "coordinates[1]")).toEqual({ cellId: "c1", rowId: "r2" });
    expect(locateModelField(doc, "coordinates")).toEqual({ cellId: "c1" });
    expect(locateModelField(doc, "parameters[9].unit")).toBeNull();
  });

  it("maps energies and forces", () => {
    expect(locateModelField(doc, "kinetic")).toEqual({ cellId: "c5" });
    expect(locateModelField(doc, "dissipation")).toEqual({ cellId: "c7" });
    expect(locateModelField(doc, "forces.theta1")).toEqual({ cellId: "c8", coordinate: "theta1" });
    expect(locateModelField(doc, 'forces["theta2"]')).toEqual({ cellId: "c8", coordinate: "theta2" });
    expect(locateModelField(doc, "title")).toBeNull();
  });
});

describe("stored-document schema", () => {
  const good = () => JSON.parse(JSON.stringify(modelToDocument(doublePendulum, counter())));

  it("rejects duplicate cell ids, a second singleton, duplicate row ids and unknown fields, with paths", () => {
    const dupId = good();
    dupId.cells[1].id = "c1";
    expect(parseStoredDocument(dupId)).toEqual({ ok: false, issues: [expect.objectContaining({ path: "cells[1].id" })] });

    const twoKinetic = good();
    twoKinetic.cells.push({ ...twoKinetic.cells[4], id: "k2" });
    expect(parseStoredDocument(twoKinetic)).toMatchObject({ ok: false, issues: [{ path: "cells[10].kind" }] });

    const dupRow = good();
    dupRow.cells[0].rows[1].id = "r1";
    expect(parseStoredDocument(dupRow)).toMatchObject({ ok: false, issues: [{ path: "cells[0].rows", message: "row ids must be unique within a cell" }] });

    const extra = good();
    extra.cells[4].script = "alert(1)";
    expect(parseStoredDocument(extra).ok).toBe(false);
  });

  it("refuses a document from a newer schema version and a missing one", () => {
    expect(parseStoredDocument({ ...good(), schemaVersion: DOCUMENT_SCHEMA_VERSION + 1 })).toMatchObject({ ok: false, issues: [{ path: "schemaVersion" }] });
    const { schemaVersion: _dropped, ...unversioned } = good();
    expect(parseStoredDocument(unversioned).ok).toBe(false);
    expect(parseStoredDocument("not a document").ok).toBe(false);
  });
});
