/**
 * The model file that can be recovered from stored content the notebook cannot
 * open, so an unreadable derivation never holds its work hostage. What can be
 * read is kept cell by cell and row by row; what cannot is named in `omitted`.
 */
import type { Model } from "../../mechanics/browser";
import { migrateDocument, storedVersionOf } from "./migrations";
import { documentToModel, parseParameterValue } from "./model-file";
import {
  DOCUMENT_LIMITS,
  DOCUMENT_SCHEMA_VERSION,
  ENERGY_KINDS,
  SINGLETON_KINDS,
  TABLE_KINDS,
  type AnyRow,
  type Cell,
  type CellKind,
  type DerivationDocument,
  type EnergyKind,
  type ForceEntry,
  type TableKind,
} from "./schema";
import { parseStoredDocument } from "./stored";

type JsonObject = { [field: string]: unknown };

export interface RecoveredModel {
  model: Model;
  /** What was left out, in words, with the stored path (`cells[3]: …`). */
  omitted: string[];
}

function isObject(value: unknown): value is JsonObject {
  return typeof value === "object" && value !== null && !Array.isArray(value);
}

const ROW_FIELDS: Record<TableKind, readonly string[]> = {
  coordinates: ["name", "unit", "description"],
  parameters: ["name", "unit", "value", "description"],
  inputs: ["name", "unit", "description"],
  definitions: ["name", "expr", "description"],
  constraints: ["name", "expr", "description"],
  "rate-constraints": ["name", "expr", "description"],
  outputs: ["name", "expr", "unit", "description"],
};

// Field by field rather than through the strict schema, so a row written by a
// newer Holonomy (with fields this one does not know) still gives its known ones.
function salvageRow(raw: unknown, kind: TableKind): AnyRow | null {
  if (!isObject(raw) || typeof raw.id !== "string" || raw.id === "") return null;
  const row: Record<string, string> = { id: raw.id };
  for (const field of ROW_FIELDS[kind]) {
    const value = raw[field] ?? "";
    if (typeof value !== "string") return null;
    row[field] = value;
  }
  return row as AnyRow;
}

/** The cells of a stored cells list that a model file can hold, each reduced to its readable rows. */
function salvageCells(rawCells: unknown[], omitted: string[]): Cell[] {
  const cells: Cell[] = [];
  const seen = new Set<string>();
  rawCells.forEach((raw, index) => {
    const at = `cells[${index}]`;
    if (!isObject(raw) || typeof raw.kind !== "string") return void omitted.push(`${at}: not a cell`);
    const kind = raw.kind;
    const id = `c${cells.length + 1}`;
    if (SINGLETON_KINDS.has(kind as CellKind) && seen.has(kind)) return void omitted.push(`${at}: a second ${kind} cell`);
    if ((TABLE_KINDS as readonly string[]).includes(kind)) {
      const table = kind as TableKind;
      if (!Array.isArray(raw.rows)) omitted.push(`${at}.rows: not a list of rows`);
      const ids = new Set<string>();
      const rows: AnyRow[] = [];
      (Array.isArray(raw.rows) ? raw.rows : []).forEach((rawRow: unknown, rowIndex: number) => {
        const row = salvageRow(rawRow, table);
        if (!row || ids.has(row.id)) return void omitted.push(`${at}.rows[${rowIndex}]: not a readable ${table} row`);
        ids.add(row.id);
        rows.push(row);
      });
      cells.push({ id, collapsed: false, kind: table, rows } as Cell);
    } else if ((ENERGY_KINDS as readonly string[]).includes(kind)) {
      if (typeof raw.expr !== "string") return void omitted.push(`${at}: the ${kind} expression is not text`);
      cells.push({ id, collapsed: false, kind: kind as EnergyKind, expr: raw.expr });
    } else if (kind === "forces") {
      const coordinates = new Set<string>();
      const entries: ForceEntry[] = [];
      (Array.isArray(raw.entries) ? raw.entries : []).forEach((entry: unknown, entryIndex: number) => {
        if (!isObject(entry) || typeof entry.coordinate !== "string" || typeof entry.expr !== "string" || coordinates.has(entry.coordinate)) {
          return void omitted.push(`${at}.entries[${entryIndex}]: not a readable force`);
        }
        coordinates.add(entry.coordinate);
        entries.push({ coordinate: entry.coordinate, expr: entry.expr });
      });
      cells.push({ id, collapsed: false, kind: "forces", entries });
    } else {
      // Notes and generated cells have no place in a model file.
      return;
    }
    seen.add(kind);
  });
  return cells;
}

/** A pre-notebook model file reduced to the entries that have the model file's shape. */
function salvageModelFile(stored: JsonObject, omitted: string[]): JsonObject {
  const kept: JsonObject = {};
  if (typeof stored.title === "string") kept.title = stored.title;
  const isText = (value: unknown) => typeof value === "string";
  const entryShapes: Record<string, (entry: JsonObject) => boolean> = {
    coordinates: (e) => isText(e.name) && (e.unit === undefined || isText(e.unit)),
    inputs: (e) => isText(e.name) && (e.unit === undefined || isText(e.unit)),
    parameters: (e) =>
      isText(e.name) && (e.unit === undefined || isText(e.unit)) && (e.value === undefined || (typeof e.value === "number" && Number.isFinite(e.value))),
    definitions: (e) => isText(e.name) && isText(e.expr),
  };
  for (const [field, fits] of Object.entries(entryShapes)) {
    const list = stored[field];
    if (list === undefined) continue;
    if (!Array.isArray(list)) {
      omitted.push(`${field}: not a list`);
      continue;
    }
    kept[field] = list.filter((entry: unknown, index) => {
      const ok = isObject(entry) && fits(entry) && (entry.description === undefined || isText(entry.description));
      if (!ok) omitted.push(`${field}[${index}]: not a readable entry`);
      return ok;
    });
  }
  for (const field of ["kinetic", "potential", "dissipation"]) {
    if (stored[field] === undefined) continue;
    if (isText(stored[field])) kept[field] = stored[field];
    else omitted.push(`${field}: not text`);
  }
  if (isObject(stored.forces)) {
    const forces: Record<string, string> = {};
    for (const [coordinate, expr] of Object.entries(stored.forces)) {
      if (typeof expr === "string") forces[coordinate] = expr;
      else omitted.push(`forces.${coordinate}: not text`);
    }
    kept.forces = forces;
  } else if (stored.forces !== undefined) omitted.push("forces: not a set of forces");
  return kept;
}

/** Parameter values that are not numbers cannot go into a model file: they are left symbolic. */
function withReadableValues(doc: DerivationDocument, omitted: string[]): DerivationDocument {
  return {
    ...doc,
    cells: doc.cells.map((cell) => {
      if (cell.kind !== "parameters") return cell;
      return {
        ...cell,
        rows: cell.rows.map((row) => {
          if (parseParameterValue(row.value) !== null) return row;
          omitted.push(`parameter ${row.name.trim() || row.id}: the value "${row.value}" is not a number, so it is left symbolic`);
          return { ...row, value: "" };
        }),
      };
    }),
  };
}

/**
 * The model file recovered from stored content: the whole model when the
 * content reads as a document, else every cell, row and field that can be read.
 *
 * @example recoverModel({ schemaVersion: 2, title: "Sled", cells: "oops" }, "Sled").omitted // ["cells: not a list of cells"]
 */
export function recoverModel(content: unknown, fallbackTitle: string): RecoveredModel {
  const omitted: string[] = [];
  let doc: DerivationDocument;
  const parsed = parseStoredDocument(content, { title: fallbackTitle });
  if (parsed.ok) doc = parsed.document;
  else {
    const stored = isObject(content) ? content : {};
    if (!isObject(content)) omitted.push("the stored content is not a JSON object");
    const title = typeof stored.title === "string" ? stored.title.slice(0, DOCUMENT_LIMITS.title) : fallbackTitle;
    let rawCells: unknown = stored.cells;
    if (storedVersionOf(stored) === 0) {
      // A model file: keep its readable entries and convert them as the migration does.
      rawCells = migrateDocument({ ...salvageModelFile(stored, omitted), title }, 0).cells;
    } else if (!Array.isArray(rawCells)) {
      omitted.push("cells: not a list of cells");
    }
    doc = { schemaVersion: DOCUMENT_SCHEMA_VERSION, title, cells: salvageCells(Array.isArray(rawCells) ? rawCells : [], omitted) };
  }
  const model = documentToModel(withReadableValues(doc, omitted));
  if (model.title.trim() === "") model.title = fallbackTitle;
  return { model, omitted };
}
