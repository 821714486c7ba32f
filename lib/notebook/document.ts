/**
 * The derivation document: an ordered list of typed cells with stable ids.
 *
 * One module holds the types, the operations and the serialization to and from
 * the model file, so that a later transport (a shared Yjs document, say) can
 * replay the same `DocumentOperation`s without the UI noticing. Every operation
 * is a pure function: it returns a new document and leaves its argument alone.
 * Operations carry every id they create, so replaying one gives the same
 * document everywhere.
 *
 * No React, no engine internals beyond the model types and the reserved names:
 * this file runs in the browser, on the server and in tests alike.
 */
// zod/mini: the tree-shakable build, so the browser bundle carries a few kB rather than all of zod.
import * as z from "zod/mini";
import { DEFAULT_MODEL_LIMITS } from "../mechanics/limits";
import type { Model } from "../mechanics/model";

/** Bump when the stored shape changes; `parseStoredDocument` migrates older versions. */
export const DOCUMENT_SCHEMA_VERSION = 1;

// ---------------------------------------------------------------------------
// Types

export interface CoordinateRow {
  id: string;
  name: string;
  unit: string;
  description: string;
}

export type InputRow = CoordinateRow;

export interface ParameterRow {
  id: string;
  name: string;
  unit: string;
  /** Kept as typed, so a half-written number is never lost; blank means symbolic. */
  value: string;
  description: string;
}

export interface DefinitionRow {
  id: string;
  name: string;
  expr: string;
  description: string;
}

/** A generalized force, keyed by the coordinate's name. */
export interface ForceEntry {
  coordinate: string;
  expr: string;
}

interface CellBase {
  id: string;
  collapsed: boolean;
  /** A title the analyst gave the cell; the kind's label is used when absent. */
  title?: string;
}

export interface CoordinatesCell extends CellBase {
  kind: "coordinates";
  rows: CoordinateRow[];
}
export interface ParametersCell extends CellBase {
  kind: "parameters";
  rows: ParameterRow[];
}
export interface InputsCell extends CellBase {
  kind: "inputs";
  rows: InputRow[];
}
export interface DefinitionsCell extends CellBase {
  kind: "definitions";
  rows: DefinitionRow[];
}
export interface EnergyCell extends CellBase {
  kind: "kinetic" | "potential" | "dissipation";
  expr: string;
}
export interface ForcesCell extends CellBase {
  kind: "forces";
  entries: ForceEntry[];
}
export interface NoteCell extends CellBase {
  kind: "note";
  /** Markdown with $inline$ and $$display$$ math. */
  markdown: string;
}

export const EQUATION_FORMS = ["residual", "mass-matrix", "accelerations"] as const;
export type EquationForm = (typeof EQUATION_FORMS)[number];

export const CODE_EXPORT_LANGUAGES = ["python", "typescript", "c", "julia", "octave"] as const;
export type CodeExportLanguage = (typeof CODE_EXPORT_LANGUAGES)[number];

export interface EquationsCell extends CellBase {
  kind: "equations";
  settings: { form: EquationForm };
}
export interface ConservedCell extends CellBase {
  kind: "conserved";
  settings: Record<string, never>;
}
export interface LinearizationCell extends CellBase {
  kind: "linearization";
  settings: {
    /** Index into the equilibria the engine found for the current parameter values. */
    equilibriumIndex: number;
    /** Input values at the operating point, as typed (blank means 0). */
    inputValues: Record<string, string>;
  };
}
export interface CodeExportCell extends CellBase {
  kind: "code-export";
  settings: { language: CodeExportLanguage };
}
/** Settings are defined by the simulation issue; stored as given until then. */
export interface SimulationCell extends CellBase {
  kind: "simulation";
  settings: Record<string, unknown>;
}

export type TableCell = CoordinatesCell | ParametersCell | InputsCell | DefinitionsCell;
export type SourceCell = TableCell | EnergyCell | ForcesCell | NoteCell;
export type GeneratedCell = EquationsCell | ConservedCell | LinearizationCell | CodeExportCell | SimulationCell;
export type Cell = SourceCell | GeneratedCell;
export type CellKind = Cell["kind"];
export type TableKind = TableCell["kind"];
export type EnergyKind = EnergyCell["kind"];
export type GeneratedKind = GeneratedCell["kind"];
/** The cell type for one kind (energy cells share one interface). */
export type CellOfKind<K extends CellKind> = K extends EnergyKind ? EnergyCell & { kind: K } : Extract<Cell, { kind: K }>;
export type RowOf<K extends TableKind> = Extract<TableCell, { kind: K }>["rows"][number];
export type AnyRow = TableCell["rows"][number];

export interface DerivationDocument {
  schemaVersion: typeof DOCUMENT_SCHEMA_VERSION;
  title: string;
  cells: Cell[];
}

export const TABLE_KINDS: readonly TableKind[] = ["coordinates", "parameters", "inputs", "definitions"];
export const ENERGY_KINDS: readonly EnergyKind[] = ["kinetic", "potential", "dissipation"];
export const GENERATED_KINDS: readonly GeneratedKind[] = ["equations", "conserved", "linearization", "code-export", "simulation"];
export const CELL_KINDS: readonly CellKind[] = [...TABLE_KINDS, ...ENERGY_KINDS, "forces", "note", ...GENERATED_KINDS];

/**
 * Kinds a document holds at most once: the model has one kinetic energy, one
 * potential, one dissipation function and one force per coordinate.
 */
export const SINGLETON_KINDS: ReadonlySet<CellKind> = new Set<CellKind>(["kinetic", "potential", "dissipation", "forces"]);

export const CELL_LABELS: Record<CellKind, string> = {
  coordinates: "Coordinates",
  parameters: "Parameters",
  inputs: "Inputs",
  definitions: "Definitions",
  kinetic: "Kinetic energy",
  potential: "Potential energy",
  dissipation: "Dissipation function",
  forces: "Generalized forces",
  note: "Note",
  equations: "Equations of motion",
  conserved: "Conserved quantities",
  linearization: "Linearization",
  "code-export": "Code export",
  simulation: "Simulation",
};

export function isTableCell(cell: Cell): cell is TableCell {
  return (TABLE_KINDS as readonly string[]).includes(cell.kind);
}
export function isEnergyCell(cell: Cell): cell is EnergyCell {
  return (ENERGY_KINDS as readonly string[]).includes(cell.kind);
}
export function isGeneratedCell(cell: Cell): cell is GeneratedCell {
  return (GENERATED_KINDS as readonly string[]).includes(cell.kind);
}

/** A problem with an operation or a conversion, named by the field it concerns. */
export class DocumentError extends Error {
  readonly field: string;
  constructor(field: string, message: string) {
    super(message);
    this.name = "DocumentError";
    this.field = field;
  }
}

// ---------------------------------------------------------------------------
// Construction

/**
 * A short random id. Uses `crypto.getRandomValues`, which (unlike randomUUID)
 * also exists on pages served without TLS.
 */
export function createId(): string {
  const bytes = new Uint8Array(9);
  globalThis.crypto.getRandomValues(bytes);
  let id = "";
  for (const byte of bytes) id += (byte % 36).toString(36);
  return id;
}

export function emptyRow<K extends TableKind>(kind: K, id: string = createId()): RowOf<K> {
  switch (kind) {
    case "parameters":
      return { id, name: "", unit: "", value: "", description: "" } as RowOf<K>;
    case "definitions":
      return { id, name: "", expr: "", description: "" } as RowOf<K>;
    default:
      return { id, name: "", unit: "", description: "" } as RowOf<K>;
  }
}

/** A new, empty cell of the given kind. */
export function createCell<K extends CellKind>(kind: K, id: string = createId()): CellOfKind<K> {
  const base = { id, collapsed: false };
  let cell: Cell;
  switch (kind) {
    case "coordinates":
    case "parameters":
    case "inputs":
    case "definitions":
      cell = { ...base, kind, rows: [] } as TableCell;
      break;
    case "kinetic":
    case "potential":
    case "dissipation":
      cell = { ...base, kind, expr: "" } as EnergyCell;
      break;
    case "forces":
      cell = { ...base, kind: "forces", entries: [] };
      break;
    case "note":
      cell = { ...base, kind: "note", markdown: "" };
      break;
    case "equations":
      cell = { ...base, kind: "equations", settings: { form: "residual" } };
      break;
    case "conserved":
      cell = { ...base, kind: "conserved", settings: {} };
      break;
    case "linearization":
      cell = { ...base, kind: "linearization", settings: { equilibriumIndex: 0, inputValues: {} } };
      break;
    case "code-export":
      cell = { ...base, kind: "code-export", settings: { language: "python" } };
      break;
    case "simulation":
      cell = { ...base, kind: "simulation", settings: {} };
      break;
    default: {
      const unknown: never = kind;
      throw new DocumentError("kind", `unknown cell kind "${String(unknown)}"`);
    }
  }
  return cell as CellOfKind<K>;
}

/** The document a new blank derivation starts from: the cells every derivation needs, empty. */
export function blankDocument(title = "Untitled derivation", newId: () => string = createId): DerivationDocument {
  const kinds: CellKind[] = ["coordinates", "parameters", "definitions", "kinetic", "potential", "equations"];
  return { schemaVersion: DOCUMENT_SCHEMA_VERSION, title, cells: kinds.map((kind) => createCell(kind, newId())) };
}

// ---------------------------------------------------------------------------
// Operations: pure functions, and the same operations as data

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
};

const ROW_NOUNS: Record<TableKind, string> = { coordinates: "coordinates", parameters: "parameters", inputs: "inputs", definitions: "definitions" };

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
      return updated as unknown as AnyRow;
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

export type SettingsOf<K extends GeneratedKind> = Extract<GeneratedCell, { kind: K }>["settings"];

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

// ---------------------------------------------------------------------------
// Symbols

function rowsOfKind<K extends TableKind>(doc: DerivationDocument, kind: K): { cell: Extract<TableCell, { kind: K }>; row: RowOf<K> }[] {
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
  return rowsOfKind(doc, "coordinates").map(({ row }) => row.name.trim()).filter((name) => name !== "");
}

/** The names an expression in this derivation may use, by category, in document order. */
export interface DocumentSymbols {
  coordinates: string[];
  parameters: string[];
  inputs: string[];
  definitions: string[];
}

export function documentSymbols(doc: DerivationDocument): DocumentSymbols {
  const names = (kind: TableKind) =>
    rowsOfKind(doc, kind)
      .map(({ row }) => row.name.trim())
      .filter((name) => name !== "");
  return { coordinates: names("coordinates"), parameters: names("parameters"), inputs: names("inputs"), definitions: names("definitions") };
}

// ---------------------------------------------------------------------------
// Serialization to and from the model file

const NUMBER_TEXT = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/;

/** Parses a parameter value as typed; `undefined` for blank (symbolic), `null` when not a number. */
export function parseParameterValue(text: string): number | undefined | null {
  const trimmed = text.trim();
  if (trimmed === "") return undefined;
  if (!NUMBER_TEXT.test(trimmed)) return null;
  const value = Number(trimmed);
  return Number.isFinite(value) ? value : null;
}

function withDescription<T extends object>(entry: T, description: string): T & { description?: string } {
  return description.trim() === "" ? entry : { ...entry, description };
}

/**
 * The model file for a document. Blank rows and blank optional expressions are
 * left out; a parameter value that is not a number throws a `DocumentError`
 * naming the model field (`parameters[2].value`), since a model cannot hold it.
 *
 * @example documentToModel(modelToDocument(model)) // deep-equals model
 */
export function documentToModel(doc: DerivationDocument): Model {
  const coordinates = rowsOfKind(doc, "coordinates").map(({ row }) => withDescription({ name: row.name.trim(), unit: row.unit.trim() }, row.description));
  const parameters = rowsOfKind(doc, "parameters").map(({ row }, index) => {
    const value = parseParameterValue(row.value);
    if (value === null) throw new DocumentError(`parameters[${index}].value`, `"${row.value}" is not a number`);
    const base = { name: row.name.trim(), unit: row.unit.trim() };
    return withDescription(value === undefined ? base : { ...base, value }, row.description);
  });
  const inputs = rowsOfKind(doc, "inputs").map(({ row }) => withDescription({ name: row.name.trim(), unit: row.unit.trim() }, row.description));
  const definitions = rowsOfKind(doc, "definitions").map(({ row }) => withDescription({ name: row.name.trim(), expr: row.expr }, row.description));
  const energy = (kind: EnergyKind) => doc.cells.find((cell): cell is EnergyCell => cell.kind === kind)?.expr ?? "";
  const forcesCell = doc.cells.find((cell): cell is ForcesCell => cell.kind === "forces");
  const forces: Record<string, string> = {};
  for (const entry of forcesCell?.entries ?? []) if (entry.expr.trim() !== "") forces[entry.coordinate] = entry.expr;

  const dissipation = energy("dissipation");
  return {
    title: doc.title,
    coordinates,
    parameters,
    ...(inputs.length > 0 ? { inputs } : {}),
    ...(definitions.length > 0 ? { definitions } : {}),
    kinetic: energy("kinetic"),
    potential: energy("potential"),
    ...(dissipation.trim() !== "" ? { dissipation } : {}),
    ...(Object.keys(forces).length > 0 ? { forces } : {}),
  };
}

/**
 * A document for a model file, in the default layout: coordinates, parameters,
 * inputs and definitions (when present), the energies, forces (when present),
 * then the equations and conserved quantities.
 */
export function modelToDocument(model: Model, newId: () => string = createId): DerivationDocument {
  const cells: Cell[] = [];
  const rowIds = (count: number) => Array.from({ length: count }, (_, i) => `r${i + 1}`);
  const describe = (description: string | undefined) => description ?? "";

  const coordinateIds = rowIds(model.coordinates.length);
  cells.push({
    ...createCell("coordinates", newId()),
    rows: model.coordinates.map((c, i) => ({ id: coordinateIds[i]!, name: c.name, unit: c.unit, description: describe(c.description) })),
  });
  const parameterIds = rowIds(model.parameters.length);
  cells.push({
    ...createCell("parameters", newId()),
    rows: model.parameters.map((p, i) => ({
      id: parameterIds[i]!,
      name: p.name,
      unit: p.unit,
      value: p.value === undefined ? "" : String(p.value),
      description: describe(p.description),
    })),
  });
  if (model.inputs && model.inputs.length > 0) {
    const ids = rowIds(model.inputs.length);
    cells.push({ ...createCell("inputs", newId()), rows: model.inputs.map((u, i) => ({ id: ids[i]!, name: u.name, unit: u.unit, description: describe(u.description) })) });
  }
  if (model.definitions && model.definitions.length > 0) {
    const ids = rowIds(model.definitions.length);
    cells.push({
      ...createCell("definitions", newId()),
      rows: model.definitions.map((d, i) => ({ id: ids[i]!, name: d.name, expr: d.expr, description: describe(d.description) })),
    });
  }
  cells.push({ ...createCell("kinetic", newId()), expr: model.kinetic });
  cells.push({ ...createCell("potential", newId()), expr: model.potential });
  if (model.dissipation !== undefined && model.dissipation.trim() !== "") cells.push({ ...createCell("dissipation", newId()), expr: model.dissipation });
  if (model.forces && Object.keys(model.forces).length > 0) {
    cells.push({ ...createCell("forces", newId()), entries: Object.entries(model.forces).map(([coordinate, expr]) => ({ coordinate, expr })) });
  }
  cells.push(createCell("equations", newId()), createCell("conserved", newId()));
  return { schemaVersion: DOCUMENT_SCHEMA_VERSION, title: model.title, cells };
}

// ---------------------------------------------------------------------------
// Locating model fields (server diagnostics) in the document

/** Which part of a cell a model field names. */
export interface FieldLocation {
  cellId: string;
  rowId?: string;
  /** The grid column (`name`, `unit`, `value`, `expr`, `description`) for row fields. */
  column?: string;
  /** The coordinate, for a generalized force. */
  coordinate?: string;
}

const FIELD_PATH = /^(coordinates|parameters|inputs|definitions)(?:\[(\d+)\](?:\.(\w+))?)?$/;
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
    const kind = table[1] as TableKind;
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

// ---------------------------------------------------------------------------
// Stored-document validation

const LIMITS = { cells: 300, rows: 200, name: 64, unit: 120, expr: 8000, text: 2000, note: 50_000, id: 64 } as const;

const text = (max: number, min = 0) => z.string().check(z.minLength(min), z.maxLength(max));
const idSchema = text(LIMITS.id, 1);
const nameText = text(LIMITS.name);
const unitText = text(LIMITS.unit);
const exprText = text(LIMITS.expr);
const descriptionText = text(LIMITS.text);

const cellBase = { id: idSchema, collapsed: z.boolean(), title: z.optional(text(200)) };
const namedUnitRow = z.strictObject({ id: idSchema, name: nameText, unit: unitText, description: descriptionText });

function rowList<T extends { id: string }>(row: z.ZodMiniType<T>) {
  return z.array(row).check(
    z.maxLength(LIMITS.rows),
    z.refine((list: T[]) => new Set(list.map((entry) => entry.id)).size === list.length, { message: "row ids must be unique within a cell" }),
  );
}

const cellSchema = z.discriminatedUnion("kind", [
  z.strictObject({ ...cellBase, kind: z.literal("coordinates"), rows: rowList(namedUnitRow) }),
  z.strictObject({ ...cellBase, kind: z.literal("inputs"), rows: rowList(namedUnitRow) }),
  z.strictObject({
    ...cellBase,
    kind: z.literal("parameters"),
    rows: rowList(z.strictObject({ id: idSchema, name: nameText, unit: unitText, value: text(64), description: descriptionText })),
  }),
  z.strictObject({
    ...cellBase,
    kind: z.literal("definitions"),
    rows: rowList(z.strictObject({ id: idSchema, name: nameText, expr: exprText, description: descriptionText })),
  }),
  z.strictObject({ ...cellBase, kind: z.literal("kinetic"), expr: exprText }),
  z.strictObject({ ...cellBase, kind: z.literal("potential"), expr: exprText }),
  z.strictObject({ ...cellBase, kind: z.literal("dissipation"), expr: exprText }),
  z.strictObject({
    ...cellBase,
    kind: z.literal("forces"),
    entries: z.array(z.strictObject({ coordinate: nameText, expr: exprText })).check(
      z.maxLength(LIMITS.rows),
      z.refine((list: ForceEntry[]) => new Set(list.map((entry) => entry.coordinate)).size === list.length, { message: "one force per coordinate" }),
    ),
  }),
  z.strictObject({ ...cellBase, kind: z.literal("note"), markdown: text(LIMITS.note) }),
  z.strictObject({ ...cellBase, kind: z.literal("equations"), settings: z.strictObject({ form: z.enum(EQUATION_FORMS) }) }),
  z.strictObject({ ...cellBase, kind: z.literal("conserved"), settings: z.strictObject({}) }),
  z.strictObject({
    ...cellBase,
    kind: z.literal("linearization"),
    settings: z.strictObject({
      equilibriumIndex: z.int().check(z.minimum(0), z.maximum(1000)),
      inputValues: z.record(nameText, text(64)),
    }),
  }),
  z.strictObject({ ...cellBase, kind: z.literal("code-export"), settings: z.strictObject({ language: z.enum(CODE_EXPORT_LANGUAGES) }) }),
  z.strictObject({ ...cellBase, kind: z.literal("simulation"), settings: z.record(z.string(), z.unknown()) }),
]);

/** zod schema of a stored document (current schema version). */
export const derivationDocumentSchema = z
  .strictObject({
    schemaVersion: z.literal(DOCUMENT_SCHEMA_VERSION),
    title: text(200),
    cells: z.array(cellSchema).check(z.maxLength(LIMITS.cells)),
  })
  .check(
    z.superRefine((doc, ctx) => {
      const ids = new Set<string>();
      const seen = new Set<string>();
      doc.cells.forEach((cell, index) => {
        if (ids.has(cell.id)) ctx.addIssue({ code: "custom", path: ["cells", index, "id"], message: `duplicate cell id "${cell.id}"`, input: cell.id });
        ids.add(cell.id);
        if (SINGLETON_KINDS.has(cell.kind)) {
          if (seen.has(cell.kind)) ctx.addIssue({ code: "custom", path: ["cells", index, "kind"], message: `more than one ${cell.kind} cell`, input: cell.kind });
          seen.add(cell.kind);
        }
      });
    }),
  );

export type StoredDocumentResult =
  | { ok: true; document: DerivationDocument }
  | { ok: false; issues: { path: string; message: string }[] };

function formatPath(path: readonly PropertyKey[]): string {
  return path.reduce<string>((text, key) => (typeof key === "number" ? `${text}[${key}]` : text === "" ? String(key) : `${text}.${String(key)}`), "");
}

/**
 * Validates a stored document (JSON from the database or a file), migrating
 * older schema versions first. Nothing is half-accepted: either the whole
 * document is valid or the issues are listed with their paths.
 */
export function parseStoredDocument(input: unknown): StoredDocumentResult {
  if (typeof input === "object" && input !== null && "schemaVersion" in input) {
    const version = (input as { schemaVersion: unknown }).schemaVersion;
    if (typeof version === "number" && version > DOCUMENT_SCHEMA_VERSION) {
      return { ok: false, issues: [{ path: "schemaVersion", message: `written by a newer version of Holonomy (schema ${version}; this one reads up to ${DOCUMENT_SCHEMA_VERSION})` }] };
    }
  }
  const result = derivationDocumentSchema.safeParse(input);
  if (result.success) return { ok: true, document: result.data as DerivationDocument };
  return { ok: false, issues: result.error.issues.map((issue) => ({ path: formatPath(issue.path), message: issue.message })) };
}
