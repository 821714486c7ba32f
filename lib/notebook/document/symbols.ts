/** The names a document defines, and where a model field sits in it. */
import type { DerivationDocument, AnyRow, RowOf, TableCell, TableKind } from "./schema";
import { ENERGY_KINDS } from "./schema";

/** The filled-in rows of every table cell of one kind, in document order (blank rows left out). */
export function rowsOfKind<K extends TableKind>(doc: DerivationDocument, kind: K): { cell: Extract<TableCell, { kind: K }>; row: RowOf<K> }[] {
  const found: { cell: Extract<TableCell, { kind: K }>; row: RowOf<K> }[] = [];
  for (const cell of doc.cells) {
    if (cell.kind !== kind) continue;
    const table = cell as Extract<TableCell, { kind: K }>;
    for (const row of table.rows as RowOf<K>[]) if (!isBlankRow(row)) found.push({ cell: table, row });
  }
  return found;
}

/** A row the analyst added but never filled in; it is left out of the model. */
export function isBlankRow(row: AnyRow): boolean {
  return Object.entries(row).every(([key, value]) => key === "id" || (typeof value === "string" && value.trim() === ""));
}

export function coordinateNames(doc: DerivationDocument): string[] {
  return rowsOfKind(doc, "coordinates")
    .map(({ row }) => row.name.trim())
    .filter((name) => name !== "");
}

/** The names an expression in this derivation may use, by category, in document order. */
export interface DocumentSymbols {
  coordinates: string[];
  parameters: string[];
  inputs: string[];
  definitions: string[];
  /** The constraints' multipliers (`lambda_<name>`, `mu_<name>`), which outputs may use. */
  multipliers?: string[];
}

/** The multiplier symbols of a document's constraints, in document order. */
export function multiplierNames(doc: DerivationDocument): string[] {
  const of = (kind: "constraints" | "rate-constraints", prefix: string) =>
    rowsOfKind(doc, kind)
      .map(({ row }) => row.name.trim())
      .filter((name) => name !== "")
      .map((name) => `${prefix}_${name}`);
  return [...of("constraints", "lambda"), ...of("rate-constraints", "mu")];
}

export function documentSymbols(doc: DerivationDocument): DocumentSymbols {
  const names = (kind: TableKind) =>
    rowsOfKind(doc, kind)
      .map(({ row }) => row.name.trim())
      .filter((name) => name !== "");
  return {
    coordinates: names("coordinates"),
    parameters: names("parameters"),
    inputs: names("inputs"),
    definitions: names("definitions"),
    multipliers: multiplierNames(doc),
  };
}

/** Which part of a cell a model field names. */
export interface FieldLocation {
  cellId: string;
  rowId?: string;
  /** The grid column (`name`, `unit`, `value`, `expr`, `description`) for row fields. */
  column?: string;
  /** The coordinate, for a generalized force. */
  coordinate?: string;
}

const FIELD_PATH = /^(coordinates|parameters|inputs|definitions|constraints|rateConstraints|outputs)(?:\[(\d+)\](?:\.(\w+))?)?$/;
/** Model-file list names that differ from the cell kind holding their rows. */
const KIND_OF_LIST: Readonly<Record<string, TableKind>> = { rateConstraints: "rate-constraints" };
const FORCE_PATH = /^forces(?:\.([A-Za-z_][A-Za-z0-9_]*)|\[["']?([A-Za-z_][A-Za-z0-9_]*)["']?\])?$/;

/**
 * Finds the cell (and row, grid column or coordinate) that a model field path
 * such as `definitions[1].expr`, `parameters[0].unit`, `kinetic` or
 * `forces.theta1` refers to, using the same row order as `documentToModel`.
 * Returns null for fields the document has no place for.
 */
export function locateModelField(doc: DerivationDocument, field: string): FieldLocation | null {
  if (field === "title") return null;
  const table = FIELD_PATH.exec(field);
  if (table) {
    const kind = KIND_OF_LIST[table[1]!] ?? (table[1] as TableKind);
    if (table[2] === undefined) {
      const cell = doc.cells.find((c) => c.kind === kind);
      return cell ? { cellId: cell.id } : null;
    }
    const entry = rowsOfKind(doc, kind)[Number(table[2])];
    if (!entry) return null;
    return table[3] ? { cellId: entry.cell.id, rowId: entry.row.id, column: table[3] } : { cellId: entry.cell.id, rowId: entry.row.id };
  }
  const force = FORCE_PATH.exec(field);
  if (force) {
    const cell = doc.cells.find((c) => c.kind === "forces");
    if (!cell) return null;
    const coordinate = force[1] ?? force[2];
    return coordinate ? { cellId: cell.id, coordinate } : { cellId: cell.id };
  }
  if ((ENERGY_KINDS as readonly string[]).includes(field)) {
    const cell = doc.cells.find((c) => c.kind === field);
    return cell ? { cellId: cell.id } : null;
  }
  return null;
}
