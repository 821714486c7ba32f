import { readdirSync, readFileSync } from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";
import * as Y from "yjs";
import { demoDerivations } from "@/db/seed/demo";
import {
  CELL_KINDS,
  DOCUMENT_SCHEMA_VERSION,
  DocumentError,
  createCell,
  parseStoredDocument,
  type Cell,
  type CellKind,
  type CellOfKind,
  type CoordinatesCell,
  type DerivationDocument,
  type ForcesCell,
} from "@/lib/notebook/document";
import {
  SharedDocumentError,
  applySharedOperation,
  deleteSharedCell,
  deleteSharedRow,
  documentToYDoc,
  fieldText,
  insertSharedCell,
  insertSharedRow,
  isSharedDocEmpty,
  moveSharedCell,
  moveSharedRow,
  removeSharedForce,
  replaceSharedDocument,
  replaceText,
  setSharedCellTitle,
  setSharedCollapsed,
  setSharedForce,
  setSharedSettings,
  setSharedTitle,
  sharedCells,
  sharedMeta,
  titleText,
  updateSharedRow,
  yDocToDocument,
} from "@/lib/notebook/document/shared-doc";

const FIXTURES = path.resolve(import.meta.dirname, "../../../fixtures/documents");

function read(input: unknown, title?: string): DerivationDocument {
  const result = parseStoredDocument(input, { title });
  if (!result.ok) throw new Error(`expected a readable document: ${JSON.stringify(result.issues)}`);
  return result.document;
}

/** Every kind of cell, with rows, entries, a cell title, a note and non-default settings. */
function everyKindDocument(): DerivationDocument {
  const cells: Cell[] = CELL_KINDS.map((kind) => createCell(kind, `k_${kind}`));
  const find = <K extends CellKind>(kind: K) => cells.find((cell) => cell.kind === kind) as CellOfKind<K>;
  find("coordinates").rows.push({ id: "r1", name: "theta", unit: "rad", description: "arm angle" }, { id: "r2", name: "x", unit: "m", description: "" });
  find("parameters").rows.push({ id: "r1", name: "m", unit: "kg", value: "2.5", description: "" });
  find("definitions").rows.push({ id: "r1", name: "xp", expr: "x + l*sin(theta)", description: "load x" });
  find("kinetic").expr = "1/2*m*x'^2";
  find("kinetic").title = "Trolley and load";
  find("forces").entries.push({ coordinate: "x", expr: "F - b*x'" });
  find("note").markdown = "Ünïcødé and emoji 🏗️ and $$\\theta$$";
  find("simulation").settings.initialCoordinates = { theta: "0.1" };
  find("simulation").settings.points = [{ x: "xp", y: "xp" }];
  find("linearization").collapsed = true;
  return { schemaVersion: DOCUMENT_SCHEMA_VERSION, title: "Every kind", cells };
}

/** Two replicas that exchange every update, as a provider does once connected. */
function connectedPair(doc: DerivationDocument): [Y.Doc, Y.Doc] {
  const a = documentToYDoc(doc);
  const b = new Y.Doc();
  Y.applyUpdate(b, Y.encodeStateAsUpdate(a));
  return [a, b];
}

function exchange(a: Y.Doc, b: Y.Doc): void {
  Y.applyUpdate(b, Y.encodeStateAsUpdate(a, Y.encodeStateVector(b)));
  Y.applyUpdate(a, Y.encodeStateAsUpdate(b, Y.encodeStateVector(a)));
}

describe("round trip", () => {
  const fixtures = readdirSync(FIXTURES).filter((name) => name.endsWith(".json"));

  it.each(fixtures)("fixture %s reads back equal after documentToYDoc", (name) => {
    const doc = read(JSON.parse(readFileSync(path.join(FIXTURES, name), "utf8")), "Fixture title");
    expect(yDocToDocument(documentToYDoc(doc))).toEqual(doc);
  });

  it.each(demoDerivations.map((entry) => [entry.title, entry.content] as const))("demo document %s reads back equal", (title, content) => {
    const doc = read(content, title);
    const ydoc = documentToYDoc(doc);
    expect(yDocToDocument(ydoc)).toEqual(doc);
    // and through the wire: a fresh replica built from the encoded state
    const replica = new Y.Doc();
    Y.applyUpdate(replica, Y.encodeStateAsUpdate(ydoc));
    expect(yDocToDocument(replica)).toEqual(doc);
  });

  it("keeps every kind of cell, cell titles, settings and non-ASCII text", () => {
    const doc = everyKindDocument();
    expect(yDocToDocument(documentToYDoc(doc))).toEqual(doc);
  });

  it("lays the document out as the contract says", () => {
    const ydoc = documentToYDoc(everyKindDocument());
    expect(sharedMeta(ydoc).get("schemaVersion")).toBe(DOCUMENT_SCHEMA_VERSION);
    expect(titleText(ydoc)?.toString()).toBe("Every kind");
    const coordinates = sharedCells(ydoc).get(0);
    expect(coordinates.get("id")).toBe("k_coordinates");
    expect(coordinates.get("kind")).toBe("coordinates");
    expect(coordinates.get("collapsed")).toBe(false);
    const rows = coordinates.get("rows") as Y.Array<Y.Map<unknown>>;
    expect(rows).toBeInstanceOf(Y.Array);
    expect(rows.get(0).get("id")).toBe("r1");
    expect(rows.get(0).get("name")).toBeInstanceOf(Y.Text);
    const simulation = sharedCells(ydoc)
      .toArray()
      .find((cell) => cell.get("kind") === "simulation")!;
    expect(simulation.get("settings")).toMatchObject({ initialCoordinates: { theta: "0.1" } });
    expect(fieldText(ydoc, "k_kinetic", "title")?.toString()).toBe("Trolley and load");
    expect(fieldText(ydoc, "k_forces", ["entries", "x", "expr"])?.toString()).toBe("F - b*x'");
    expect(fieldText(ydoc, "k_coordinates", ["rows", "r2", "name"])?.toString()).toBe("x");
    expect(fieldText(ydoc, "k_coordinates", ["rows", "nope", "name"])).toBeNull();
    expect(fieldText(ydoc, "missing", "expr")).toBeNull();
  });

  it("refuses to fill a Y.Doc twice and to read an empty one", () => {
    const ydoc = documentToYDoc(everyKindDocument());
    expect(() => documentToYDoc(everyKindDocument(), ydoc)).toThrow(DocumentError);
    const empty = new Y.Doc();
    expect(isSharedDocEmpty(empty)).toBe(true);
    expect(() => yDocToDocument(empty)).toThrow(SharedDocumentError);
  });

  it("names the path of a field that breaks the document's limits", () => {
    const ydoc = documentToYDoc(everyKindDocument());
    fieldText(ydoc, "k_coordinates", ["rows", "r1", "name"])!.insert(0, "n".repeat(80));
    try {
      yDocToDocument(ydoc);
      expect.unreachable("an over-long name must not read");
    } catch (error) {
      expect(error).toBeInstanceOf(SharedDocumentError);
      expect((error as SharedDocumentError).field).toBe("cells[0].rows[0].name");
    }
  });
});

describe("concurrent edits", () => {
  it("merge two people's typing in one expression", () => {
    const [a, b] = connectedPair(everyKindDocument());
    fieldText(a, "k_kinetic", "expr")!.insert(0, "(");
    fieldText(a, "k_kinetic", "expr")!.insert(fieldText(a, "k_kinetic", "expr")!.length, ")");
    fieldText(b, "k_kinetic", "expr")!.insert(fieldText(b, "k_kinetic", "expr")!.length, " + 1/2*M*x'^2");
    exchange(a, b);
    const expr = fieldText(a, "k_kinetic", "expr")!.toString();
    expect(expr).toBe(fieldText(b, "k_kinetic", "expr")!.toString());
    expect(expr).toContain("(1/2*m*x'^2");
    expect(expr).toContain(" + 1/2*M*x'^2");
    expect(yDocToDocument(a)).toEqual(yDocToDocument(b));
  });

  it("keep an edit made inside a field while a whole-document write changes another part of it", () => {
    const [a, b] = connectedPair(everyKindDocument());
    const before = yDocToDocument(a);
    // a: the server replaces the document (a restored revision) changing the end of the note
    const target = structuredClone(before);
    const note = target.cells.find((cell) => cell.kind === "note")!;
    if (note.kind === "note") note.markdown = note.markdown.replace("\\theta", "\\phi");
    replaceSharedDocument(a, target);
    // b: someone types at the start of the note at the same time
    fieldText(b, "k_note", "markdown")!.insert(0, "Draft: ");
    exchange(a, b);
    expect(fieldText(a, "k_note", "markdown")!.toString()).toBe("Draft: Ünïcødé and emoji 🏗️ and $$\\phi$$");
    expect(yDocToDocument(a)).toEqual(yDocToDocument(b));
  });

  it("read the same document on both sides when two people add the same singleton cell or move the same cell", () => {
    const doc = everyKindDocument();
    doc.cells = doc.cells.filter((cell) => cell.kind !== "dissipation");
    const [a, b] = connectedPair(doc);
    insertSharedCell(a, createCell("dissipation", "da"), 3);
    insertSharedCell(b, createCell("dissipation", "db"), 5);
    moveSharedCell(a, "k_coordinates", 4);
    moveSharedCell(b, "k_coordinates", 6);
    exchange(a, b);
    const read = yDocToDocument(a);
    expect(read).toEqual(yDocToDocument(b));
    expect(read.cells.filter((cell) => cell.kind === "dissipation")).toHaveLength(1);
    expect(read.cells.filter((cell) => cell.id === "k_coordinates")).toHaveLength(1);
    // the next operation through the module clears the leftover duplicates
    setSharedCollapsed(a, "k_parameters", true);
    expect(sharedCells(a).length).toBe(read.cells.length);
  });
});

describe("typed operations", () => {
  it("insert, move and delete cells", () => {
    const ydoc = documentToYDoc(everyKindDocument());
    const note = { ...createCell("note", "n2"), markdown: "second note" };
    let doc = insertSharedCell(ydoc, note, 1);
    expect(doc.cells[1]).toEqual(note);
    doc = moveSharedCell(ydoc, "n2", 4);
    expect(doc.cells.map((cell) => cell.id).indexOf("n2")).toBe(4);
    doc = deleteSharedCell(ydoc, "k_coordinates");
    expect(doc.cells.some((cell) => cell.id === "k_coordinates")).toBe(false);
    expect(yDocToDocument(ydoc)).toEqual(doc);
  });

  it("moves a cell by deleting and inserting that cell only", () => {
    const ydoc = documentToYDoc(everyKindDocument());
    const kinetic = fieldText(ydoc, "k_kinetic", "expr");
    let deleted = 0;
    let inserted = 0;
    sharedCells(ydoc).observe((event) => {
      for (const change of event.changes.delta) {
        deleted += change.delete ?? 0;
        inserted += Array.isArray(change.insert) ? change.insert.length : 0;
      }
    });
    moveSharedCell(ydoc, "k_inputs", 10);
    expect([deleted, inserted]).toEqual([1, 1]);
    // untouched cells keep their Y.Text, so an editor bound to one keeps working
    expect(fieldText(ydoc, "k_kinetic", "expr")).toBe(kinetic);
    expect(yDocToDocument(ydoc).cells.map((cell) => cell.id)[10]).toBe("k_inputs");
  });

  it("refuses what the pure operations refuse, changing nothing", () => {
    const ydoc = documentToYDoc(everyKindDocument());
    const before = Y.encodeStateVector(ydoc);
    expect(() => insertSharedCell(ydoc, createCell("kinetic", "second"))).toThrow(DocumentError);
    expect(() => deleteSharedCell(ydoc, "nope")).toThrow(DocumentError);
    expect(() => setSharedSettings(ydoc, "k_equations", { form: "sideways" })).toThrow(DocumentError);
    expect(Y.encodeStateVector(ydoc)).toEqual(before);
  });

  it("insert, update, move and delete rows; a coordinate rename carries its force", () => {
    const ydoc = documentToYDoc(everyKindDocument());
    insertSharedRow(ydoc, "k_coordinates", { id: "r3", name: "phi", unit: "rad", description: "" }, 0);
    moveSharedRow(ydoc, "k_coordinates", "r3", 2);
    let doc = updateSharedRow(ydoc, "k_coordinates", "r2", { name: "s" });
    const coordinates = doc.cells[0] as CoordinatesCell;
    expect(coordinates.rows.map((row) => row.id)).toEqual(["r1", "r2", "r3"]);
    expect(coordinates.rows[1]!.name).toBe("s");
    expect((doc.cells.find((cell) => cell.kind === "forces") as ForcesCell).entries).toEqual([{ coordinate: "s", expr: "F - b*x'" }]);
    expect(fieldText(ydoc, "k_forces", ["entries", "s", "expr"])?.toString()).toBe("F - b*x'");
    doc = deleteSharedRow(ydoc, "k_coordinates", "r1");
    expect((doc.cells[0] as CoordinatesCell).rows.map((row) => row.id)).toEqual(["r2", "r3"]);
    expect(yDocToDocument(ydoc)).toEqual(doc);
  });

  it("set collapsed, settings, titles and forces", () => {
    const ydoc = documentToYDoc(everyKindDocument());
    setSharedCollapsed(ydoc, "k_parameters", true);
    setSharedSettings(ydoc, "k_equations", { form: "accelerations" });
    setSharedCellTitle(ydoc, "k_note", "Assumptions");
    setSharedTitle(ydoc, "Renamed");
    setSharedForce(ydoc, "k_forces", "theta", "tau");
    let doc = removeSharedForce(ydoc, "k_forces", "x");
    expect(doc.title).toBe("Renamed");
    expect(doc.cells[1]!.collapsed).toBe(true);
    expect(doc.cells.find((cell) => cell.id === "k_equations")).toMatchObject({ settings: { form: "accelerations" } });
    expect(doc.cells.find((cell) => cell.id === "k_note")!.title).toBe("Assumptions");
    expect((doc.cells.find((cell) => cell.id === "k_forces") as ForcesCell).entries).toEqual([{ coordinate: "theta", expr: "tau" }]);
    doc = setSharedCellTitle(ydoc, "k_note", "");
    expect("title" in doc.cells.find((cell) => cell.id === "k_note")!).toBe(false);
    expect(yDocToDocument(ydoc)).toEqual(doc);
  });

  it("apply each operation in one transaction with the given origin", () => {
    const ydoc = documentToYDoc(everyKindDocument());
    const origins: unknown[] = [];
    ydoc.on("afterTransaction", (transaction: Y.Transaction) => origins.push(transaction.origin));
    const origin = { who: "editor" };
    applySharedOperation(ydoc, { type: "duplicateCell", cellId: "k_note", newCellId: "k_note_b" }, origin);
    setSharedCollapsed(ydoc, "k_note_b", true, origin);
    expect(origins).toEqual([origin, origin]);
  });

  it("an undo manager over the cells undoes a typed operation", () => {
    const ydoc = documentToYDoc(everyKindDocument());
    const undo = new Y.UndoManager(sharedCells(ydoc), { trackedOrigins: new Set(["me"]) });
    const before = yDocToDocument(ydoc);
    deleteSharedCell(ydoc, "k_note", "me");
    undo.undo();
    expect(yDocToDocument(ydoc)).toEqual(before);
    undo.destroy();
  });
});

describe("replaceSharedDocument", () => {
  it("turns any document into any other and fills an empty Y.Doc", () => {
    const from = everyKindDocument();
    const to = read(demoDerivations[0]!.content, demoDerivations[0]!.title);
    const ydoc = documentToYDoc(from);
    replaceSharedDocument(ydoc, to);
    expect(yDocToDocument(ydoc)).toEqual(to);
    replaceSharedDocument(ydoc, from);
    expect(yDocToDocument(ydoc)).toEqual(from);
    const empty = new Y.Doc();
    replaceSharedDocument(empty, to);
    expect(yDocToDocument(empty)).toEqual(to);
  });

  it("changes nothing when the document is the same", () => {
    const doc = everyKindDocument();
    const ydoc = documentToYDoc(doc);
    const before = Y.encodeStateVector(ydoc);
    replaceSharedDocument(ydoc, structuredClone(doc));
    expect(Y.encodeStateVector(ydoc)).toEqual(before);
  });

  it("edits a text by its differing middle only", () => {
    const text = new Y.Doc().getText("t");
    text.insert(0, "1/2*m*x'^2");
    const deltas: unknown[] = [];
    text.observe((event) => deltas.push(event.delta));
    replaceText(text, "1/2*M*x'^2");
    expect(text.toString()).toBe("1/2*M*x'^2");
    expect(deltas).toEqual([[{ retain: 4 }, { delete: 1 }, { insert: "M" }]]);
  });
});
