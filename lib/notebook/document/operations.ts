/**
 * Operations on a document: pure functions, and the same operations as data.
 *
 * A later transport (a shared Yjs document, say) can replay the same
 * `DocumentOperation`s without the UI noticing. Every operation returns a new
 * document and leaves its argument alone, and carries every id it creates, so
 * replaying one gives the same document everywhere.
 */
import { DEFAULT_MODEL_LIMITS } from "../../mechanics/browser";
import { createId, emptyRow } from "./create";
import { DocumentError } from "./errors";
import {
  CELL_LABELS,
  SINGLETON_KINDS,
  cellSchema,
  isEnergyCell,
  isGeneratedCell,
  isTableCell,
  type AnyRow,
  type Cell,
  type CellKind,
  type DefinitionRow,
  type DerivationDocument,
  type ParameterRow,
  type TableCell,
  type TableKind,
} from "./schema";
import { coordinateNames } from "./symbols";

export function findCell(doc: DerivationDocument, cellId: string): Cell | undefined {
  return doc.cells.find((cell) => cell.id === cellId);
}

function indexOfCell(doc: DerivationDocument, cellId: string): number {
  const index = doc.cells.findIndex((cell) => cell.id === cellId);
  if (index < 0) throw new DocumentError("cells", `no cell with id "${cellId}"`);
  return index;
}

function replaceCell(doc: DerivationDocument, cellId: string, update: (cell: Cell) => Cell): DerivationDocument {
  const index = indexOfCell(doc, cellId);
  const cells = doc.cells.slice();
  cells[index] = update(cells[index]!);
  return { ...doc, cells };
}

function clampIndex(index: number, length: number): number {
  return Math.max(0, Math.min(length, Math.trunc(index)));
}

/** Whether a cell of this kind may be added (singletons only once). */
export function canAddCell(doc: DerivationDocument, kind: CellKind): boolean {
  return !SINGLETON_KINDS.has(kind) || !doc.cells.some((cell) => cell.kind === kind);
}

export function setTitle(doc: DerivationDocument, title: string): DerivationDocument {
  return { ...doc, title };
}

/** Inserts `cell` at `index` (default: the end). */
export function addCell(doc: DerivationDocument, cell: Cell, index: number = doc.cells.length): DerivationDocument {
  if (doc.cells.some((existing) => existing.id === cell.id)) throw new DocumentError("cells", `a cell with id "${cell.id}" already exists`);
  if (!canAddCell(doc, cell.kind)) throw new DocumentError("cells", `the derivation already has a ${CELL_LABELS[cell.kind].toLowerCase()} cell`);
  const cells = doc.cells.slice();
  cells.splice(clampIndex(index, cells.length), 0, cell);
  return { ...doc, cells };
}

export function deleteCell(doc: DerivationDocument, cellId: string): DerivationDocument {
  const index = indexOfCell(doc, cellId);
  return { ...doc, cells: doc.cells.filter((_, i) => i !== index) };
}

/** Copies a cell (content, settings, collapsed state) right below the original under `newCellId`. */
export function duplicateCell(doc: DerivationDocument, cellId: string, newCellId: string = createId()): DerivationDocument {
  const index = indexOfCell(doc, cellId);
  const original = doc.cells[index]!;
  // Row ids only need to be unique within their cell, so the copy keeps them.
  const copy = { ...structuredClone(original), id: newCellId } as Cell;
  return addCell(doc, copy, index + 1);
}

/** Moves a cell so that it ends up at `toIndex` in the new order. */
export function moveCell(doc: DerivationDocument, cellId: string, toIndex: number): DerivationDocument {
  const from = indexOfCell(doc, cellId);
  const cells = doc.cells.slice();
  const [cell] = cells.splice(from, 1);
  cells.splice(clampIndex(toIndex, cells.length), 0, cell!);
  return { ...doc, cells };
}

/** Moves a cell one place up (-1) or down (+1); a no-op at either end. */
export function moveCellBy(doc: DerivationDocument, cellId: string, delta: -1 | 1): DerivationDocument {
  const from = indexOfCell(doc, cellId);
  const to = from + delta;
  if (to < 0 || to >= doc.cells.length) return doc;
  return moveCell(doc, cellId, to);
}

export function setCollapsed(doc: DerivationDocument, cellId: string, collapsed: boolean): DerivationDocument {
  return replaceCell(doc, cellId, (cell) => (cell.collapsed === collapsed ? cell : { ...cell, collapsed }));
}

export function setCellTitle(doc: DerivationDocument, cellId: string, title: string): DerivationDocument {
  return replaceCell(doc, cellId, (cell) => {
    const { title: _previous, ...rest } = cell;
    return (title.trim() === "" ? rest : { ...rest, title }) as Cell;
  });
}

/** Sets the expression of a kinetic, potential or dissipation cell. */
export function setExpression(doc: DerivationDocument, cellId: string, expr: string): DerivationDocument {
  return replaceCell(doc, cellId, (cell) => {
    if (!isEnergyCell(cell)) throw new DocumentError("expr", `a ${cell.kind} cell has no single expression`);
    return { ...cell, expr };
  });
}

export function setNote(doc: DerivationDocument, cellId: string, markdown: string): DerivationDocument {
  return replaceCell(doc, cellId, (cell) => {
    if (cell.kind !== "note") throw new DocumentError("markdown", `a ${cell.kind} cell holds no note`);
    return { ...cell, markdown };
  });
}

function tableCell(cell: Cell): TableCell {
  if (!isTableCell(cell)) throw new DocumentError("rows", `a ${cell.kind} cell has no rows`);
  return cell;
}

/** How many rows of each kind a derivation may hold: the engine's model limits. */
export const ROW_LIMITS: Record<TableKind, number> = {
  coordinates: DEFAULT_MODEL_LIMITS.maxCoordinates,
  parameters: DEFAULT_MODEL_LIMITS.maxParameters,
  inputs: DEFAULT_MODEL_LIMITS.maxInputs,
  definitions: DEFAULT_MODEL_LIMITS.maxDefinitions,
  // Fewer constraints than coordinates, or nothing is left to move.
  constraints: DEFAULT_MODEL_LIMITS.maxCoordinates,
  "rate-constraints": DEFAULT_MODEL_LIMITS.maxCoordinates,
  outputs: 50,
};

const ROW_NOUNS: Record<TableKind, string> = {
  coordinates: "coordinates",
  parameters: "parameters",
  inputs: "inputs",
  definitions: "definitions",
  constraints: "constraints",
  "rate-constraints": "rate constraints",
  outputs: "outputs",
};

/** Rows of a kind across the document, blank ones included (each may still be filled in). */
export function rowCount(doc: DerivationDocument, kind: TableKind): number {
  return doc.cells.reduce((sum, cell) => sum + (cell.kind === kind ? (cell as TableCell).rows.length : 0), 0);
}

/** Whether one more row of this kind fits the model limits. */
export function canAddRow(doc: DerivationDocument, kind: TableKind): boolean {
  return rowCount(doc, kind) < ROW_LIMITS[kind];
}

/** The sentence that states a kind's limit, shown beside the add button and in the refusal. */
export function rowLimitText(kind: TableKind): string {
  return `A derivation holds at most ${ROW_LIMITS[kind]} ${ROW_NOUNS[kind]}.`;
}

/** Adds a row; refuses one past the model's limit for its kind, so it fails here and not at evaluation. */
export function addRow(doc: DerivationDocument, cellId: string, row: AnyRow, index?: number): DerivationDocument {
  const target = findCell(doc, cellId);
  if (target && isTableCell(target) && !canAddRow(doc, target.kind)) throw new DocumentError(target.kind, rowLimitText(target.kind));
  return replaceCell(doc, cellId, (cell) => {
    const table = tableCell(cell);
    if (table.rows.some((existing) => existing.id === row.id)) throw new DocumentError("rows", `a row with id "${row.id}" already exists`);
    const filled = { ...emptyRow(table.kind, row.id), ...row };
    const rows = (table.rows as AnyRow[]).slice();
    rows.splice(clampIndex(index ?? rows.length, rows.length), 0, filled);
    return { ...table, rows } as TableCell;
  });
}

export type RowPatch = Partial<Omit<ParameterRow, "id">> & Partial<Omit<DefinitionRow, "id">>;

/**
 * Changes fields of one row. Renaming a coordinate carries its generalized
 * force along, so a force is never silently orphaned by a rename.
 */
export function updateRow(doc: DerivationDocument, cellId: string, rowId: string, patch: RowPatch): DerivationDocument {
  let renamed: { from: string; to: string } | null = null;
  const next = replaceCell(doc, cellId, (cell) => {
    const table = tableCell(cell);
    const allowed = Object.keys(emptyRow(table.kind, "x")).filter((key) => key !== "id");
    const rows = (table.rows as AnyRow[]).map((row) => {
      if (row.id !== rowId) return row;
      const updated: Record<string, unknown> = { ...row };
      for (const [key, value] of Object.entries(patch)) {
        if (value === undefined) continue;
        if (!allowed.includes(key)) throw new DocumentError(key, `a ${table.kind} row has no field "${key}"`);
        updated[key] = value;
      }
      if (table.kind === "coordinates" && patch.name !== undefined && patch.name !== row.name) renamed = { from: row.name, to: patch.name };
      return updated as AnyRow;
    });
    if (!rows.some((row) => row.id === rowId)) throw new DocumentError("rows", `no row with id "${rowId}"`);
    return { ...table, rows } as TableCell;
  });
  return renamed ? carryForceOnRename(next, renamed) : next;
}

function carryForceOnRename(doc: DerivationDocument, { from, to }: { from: string; to: string }): DerivationDocument {
  if (from === "") return doc;
  const stillNamed = coordinateNames(doc).includes(from);
  if (stillNamed) return doc;
  return {
    ...doc,
    cells: doc.cells.map((cell) => {
      if (cell.kind !== "forces") return cell;
      if (cell.entries.some((entry) => entry.coordinate === to)) return cell;
      return { ...cell, entries: cell.entries.map((entry) => (entry.coordinate === from ? { ...entry, coordinate: to } : entry)) };
    }),
  };
}

export function deleteRow(doc: DerivationDocument, cellId: string, rowId: string): DerivationDocument {
  return replaceCell(doc, cellId, (cell) => {
    const table = tableCell(cell);
    if (!table.rows.some((row) => row.id === rowId)) throw new DocumentError("rows", `no row with id "${rowId}"`);
    return { ...table, rows: (table.rows as AnyRow[]).filter((row) => row.id !== rowId) } as TableCell;
  });
}

export function moveRow(doc: DerivationDocument, cellId: string, rowId: string, toIndex: number): DerivationDocument {
  return replaceCell(doc, cellId, (cell) => {
    const table = tableCell(cell);
    const rows = (table.rows as AnyRow[]).slice();
    const from = rows.findIndex((row) => row.id === rowId);
    if (from < 0) throw new DocumentError("rows", `no row with id "${rowId}"`);
    const [row] = rows.splice(from, 1);
    rows.splice(clampIndex(toIndex, rows.length), 0, row!);
    return { ...table, rows } as TableCell;
  });
}

/** Sets the generalized force on one coordinate; a blank expression removes the entry. */
export function setForce(doc: DerivationDocument, cellId: string, coordinate: string, expr: string): DerivationDocument {
  return replaceCell(doc, cellId, (cell) => {
    if (cell.kind !== "forces") throw new DocumentError("forces", `a ${cell.kind} cell holds no forces`);
    const exists = cell.entries.some((entry) => entry.coordinate === coordinate);
    // Keep the entry while it exists so the editor's text is not dropped mid-edit; blank entries
    // are left out of the model.
    const entries = exists
      ? cell.entries.map((entry) => (entry.coordinate === coordinate ? { coordinate, expr } : entry))
      : [...cell.entries, { coordinate, expr }];
    return { ...cell, entries };
  });
}

/** Removes the force entry for a coordinate (used to clear one whose coordinate is gone). */
export function removeForce(doc: DerivationDocument, cellId: string, coordinate: string): DerivationDocument {
  return replaceCell(doc, cellId, (cell) => {
    if (cell.kind !== "forces") throw new DocumentError("forces", `a ${cell.kind} cell holds no forces`);
    return { ...cell, entries: cell.entries.filter((entry) => entry.coordinate !== coordinate) };
  });
}

/** Merges `patch` into a generated cell's settings. */
export function updateSettings(doc: DerivationDocument, cellId: string, patch: Record<string, unknown>): DerivationDocument {
  const next = replaceCell(doc, cellId, (cell) => {
    if (!isGeneratedCell(cell)) throw new DocumentError("settings", `a ${cell.kind} cell has no settings`);
    return { ...cell, settings: { ...cell.settings, ...patch } } as Cell;
  });
  const result = cellSchema.safeParse(findCell(next, cellId));
  if (!result.success) throw new DocumentError("settings", result.error.issues[0]?.message ?? "invalid settings");
  return next;
}

/**
 * Every change to a document as data. The UI emits these; the local transport
 * applies them with `applyOperation`, a collaborative one can translate them.
 */
export type DocumentOperation =
  | { type: "setTitle"; title: string }
  | { type: "addCell"; cell: Cell; index?: number }
  | { type: "deleteCell"; cellId: string }
  | { type: "duplicateCell"; cellId: string; newCellId: string }
  | { type: "moveCell"; cellId: string; toIndex: number }
  | { type: "setCollapsed"; cellId: string; collapsed: boolean }
  | { type: "setCellTitle"; cellId: string; title: string }
  | { type: "setExpression"; cellId: string; expr: string }
  | { type: "setNote"; cellId: string; markdown: string }
  | { type: "addRow"; cellId: string; row: AnyRow; index?: number }
  | { type: "updateRow"; cellId: string; rowId: string; patch: RowPatch }
  | { type: "deleteRow"; cellId: string; rowId: string }
  | { type: "moveRow"; cellId: string; rowId: string; toIndex: number }
  | { type: "setForce"; cellId: string; coordinate: string; expr: string }
  | { type: "removeForce"; cellId: string; coordinate: string }
  | { type: "updateSettings"; cellId: string; patch: Record<string, unknown> };

export function applyOperation(doc: DerivationDocument, op: DocumentOperation): DerivationDocument {
  switch (op.type) {
    case "setTitle":
      return setTitle(doc, op.title);
    case "addCell":
      return addCell(doc, op.cell, op.index);
    case "deleteCell":
      return deleteCell(doc, op.cellId);
    case "duplicateCell":
      return duplicateCell(doc, op.cellId, op.newCellId);
    case "moveCell":
      return moveCell(doc, op.cellId, op.toIndex);
    case "setCollapsed":
      return setCollapsed(doc, op.cellId, op.collapsed);
    case "setCellTitle":
      return setCellTitle(doc, op.cellId, op.title);
    case "setExpression":
      return setExpression(doc, op.cellId, op.expr);
    case "setNote":
      return setNote(doc, op.cellId, op.markdown);
    case "addRow":
      return addRow(doc, op.cellId, op.row, op.index);
    case "updateRow":
      return updateRow(doc, op.cellId, op.rowId, op.patch);
    case "deleteRow":
      return deleteRow(doc, op.cellId, op.rowId);
    case "moveRow":
      return moveRow(doc, op.cellId, op.rowId, op.toIndex);
    case "setForce":
      return setForce(doc, op.cellId, op.coordinate, op.expr);
    case "removeForce":
      return removeForce(doc, op.cellId, op.coordinate);
    case "updateSettings":
      return updateSettings(doc, op.cellId, op.patch);
  }
}
