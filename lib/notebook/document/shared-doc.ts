/**
 * The derivation document as a shared Yjs document, so several people can edit
 * one derivation at once.
 *
 * Layout of the Y.Doc:
 * - root `Y.Map` "meta": `schemaVersion` (number) and `title` (Y.Text);
 * - root `Y.Array<Y.Map>` "cells": one Y.Map per cell. `id` and `kind` are
 *   plain strings and `collapsed` a boolean; every other string field
 *   (expr, markdown, title) is a Y.Text; every array field (rows, entries) is a
 *   Y.Array<Y.Map> whose items keep their key (`id`, or `coordinate` for a force
 *   entry, which has no id) as a plain string and every other string field as a
 *   Y.Text; an object field (settings) is a plain JSON value, last writer wins.
 *
 * The mapping is by structure, not by cell kind, so a new kind of cell needs no
 * change here. Reading goes through the one document validation
 * (`parseStoredDocument`), so the shared form never holds more than a stored
 * document may.
 *
 * Concurrent edits can leave shapes no single edit makes: two people adding
 * the same singleton cell, or moving the same cell (a move is a delete and an
 * insert). Reading keeps the first of such duplicates in document order, which
 * every copy agrees on; the next operation through this module removes the rest.
 */
import * as Y from "yjs";
import { DocumentError, type DocumentIssue } from "./errors";
import { applyOperation, type DocumentOperation, type RowPatch } from "./operations";
import { SINGLETON_KINDS, type AnyRow, type Cell, type DerivationDocument } from "./schema";
import { parseStoredDocument } from "./stored";

/** Names of the two root types. */
export const SHARED_META = "meta";
export const SHARED_CELLS = "cells";

/** Fields of a cell kept as plain strings rather than Y.Text. */
const PLAIN_CELL_FIELDS: ReadonlySet<string> = new Set(["id", "kind"]);
/** Fields that identify an item of an array field, kept as plain strings; the first present one is the item's key. */
const ITEM_KEY_FIELDS = ["id", "coordinate"] as const;

type Json = null | boolean | number | string | Json[] | { [key: string]: Json };
type JsonObject = { [key: string]: Json };

/** A shared document that does not read as a derivation document, with the problems at their paths. */
export class SharedDocumentError extends DocumentError {
  readonly issues: DocumentIssue[];
  constructor(issues: DocumentIssue[]) {
    super(issues[0]?.path ?? "", issues.map((issue) => (issue.path === "" ? issue.message : `${issue.path}: ${issue.message}`)).join("; "));
    this.name = "SharedDocumentError";
    this.issues = issues;
  }
}

export function sharedMeta(ydoc: Y.Doc): Y.Map<unknown> {
  return ydoc.getMap(SHARED_META);
}

export function sharedCells(ydoc: Y.Doc): Y.Array<Y.Map<unknown>> {
  return ydoc.getArray<Y.Map<unknown>>(SHARED_CELLS);
}

/** Whether the Y.Doc holds no document yet (never filled, nothing received). */
export function isSharedDocEmpty(ydoc: Y.Doc): boolean {
  return sharedMeta(ydoc).size === 0 && sharedCells(ydoc).length === 0;
}

// ---------------------------------------------------------------------------
// JSON -> Y

function isObject(value: unknown): value is JsonObject {
  return typeof value === "object" && value !== null && !Array.isArray(value);
}

function textOf(value: string): Y.Text {
  const text = new Y.Text();
  if (value !== "") text.insert(0, value);
  return text;
}

function itemToYMap(item: JsonObject): Y.Map<unknown> {
  const map = new Y.Map<unknown>();
  for (const [key, value] of Object.entries(item)) {
    if (value === undefined) continue;
    map.set(key, typeof value === "string" && !(ITEM_KEY_FIELDS as readonly string[]).includes(key) ? textOf(value) : structuredClone(value));
  }
  return map;
}

function isObjectArray(value: Json): value is JsonObject[] {
  return Array.isArray(value) && value.every(isObject);
}

function fieldToY(key: string, value: Json): unknown {
  if (typeof value === "string") return PLAIN_CELL_FIELDS.has(key) ? value : textOf(value);
  if (isObjectArray(value)) return Y.Array.from(value.map(itemToYMap));
  return structuredClone(value);
}

function cellToYMap(cell: Cell | JsonObject): Y.Map<unknown> {
  const map = new Y.Map<unknown>();
  for (const [key, value] of Object.entries(cell)) if (value !== undefined) map.set(key, fieldToY(key, value as Json));
  return map;
}

/**
 * Fills an empty Y.Doc with a document in one transaction (a new Y.Doc when
 * none is given) and returns it. Throws a `DocumentError` when the Y.Doc
 * already holds content: merging two independent fillings would duplicate every cell.
 */
export function documentToYDoc(doc: DerivationDocument, ydoc: Y.Doc = new Y.Doc(), origin: unknown = null): Y.Doc {
  if (!isSharedDocEmpty(ydoc)) throw new DocumentError("", "the shared document already holds content");
  ydoc.transact(() => {
    const meta = sharedMeta(ydoc);
    meta.set("schemaVersion", doc.schemaVersion);
    meta.set("title", textOf(doc.title));
    sharedCells(ydoc).push(doc.cells.map(cellToYMap));
  }, origin);
  return ydoc;
}

// ---------------------------------------------------------------------------
// Y -> JSON

function yToJson(value: unknown): Json {
  if (value instanceof Y.Text) return value.toString();
  if (value instanceof Y.Array) return value.toArray().map(yToJson);
  if (value instanceof Y.Map) {
    const out: JsonObject = {};
    for (const [key, inner] of value.entries()) out[key] = yToJson(inner);
    return out;
  }
  return value === undefined ? null : (structuredClone(value) as Json);
}

function itemKey(item: JsonObject, index: number): string {
  for (const field of ITEM_KEY_FIELDS) if (typeof item[field] === "string") return `${field}:${item[field]}`;
  return `#${index}`;
}

/** Keeps the first of duplicate cells and items (see the module comment). */
function withoutMergeDuplicates(cells: Json[]): Json[] {
  const ids = new Set<string>();
  const singletons = new Set<string>();
  const kept: Json[] = [];
  for (const cell of cells) {
    if (!isObject(cell)) {
      kept.push(cell);
      continue;
    }
    if (typeof cell.id === "string") {
      if (ids.has(cell.id)) continue;
      ids.add(cell.id);
    }
    if (typeof cell.kind === "string" && SINGLETON_KINDS.has(cell.kind as Cell["kind"])) {
      if (singletons.has(cell.kind)) continue;
      singletons.add(cell.kind);
    }
    const copy: JsonObject = { ...cell };
    for (const [key, value] of Object.entries(cell)) {
      if (!isObjectArray(value)) continue;
      const seen = new Set<string>();
      copy[key] = value.filter((item, index) => {
        const k = itemKey(item, index);
        if (seen.has(k)) return false;
        seen.add(k);
        return true;
      });
    }
    kept.push(copy);
  }
  return kept;
}

/** The shared document's content as stored JSON, without validation (duplicates from merges included). */
export function yDocToJson(ydoc: Y.Doc): JsonObject {
  const meta = sharedMeta(ydoc);
  const out: JsonObject = {};
  for (const [key, value] of meta.entries()) out[key] = yToJson(value);
  out.cells = sharedCells(ydoc)
    .toArray()
    .map((cell) => yToJson(cell));
  return out;
}

/**
 * The document a Y.Doc holds, through the one document validation (an older
 * schema version is migrated). Throws a `SharedDocumentError` naming the paths
 * of the problems when it does not read.
 */
export function yDocToDocument(ydoc: Y.Doc): DerivationDocument {
  if (isSharedDocEmpty(ydoc)) throw new SharedDocumentError([{ path: "", message: "the shared document is empty" }]);
  const raw = yDocToJson(ydoc);
  raw.cells = withoutMergeDuplicates(raw.cells as Json[]);
  const result = parseStoredDocument(raw);
  if (!result.ok) throw new SharedDocumentError(result.issues);
  return result.document;
}

// ---------------------------------------------------------------------------
// Fields

/**
 * Where an editor field sits within a cell: `"expr"`, `"markdown"`, `"title"`,
 * or `[arrayField, itemKey, field]` for a field of a row or entry, the item
 * found by its `id` (a force entry by its `coordinate`): `["rows", "r2", "name"]`,
 * `["entries", "theta", "expr"]`.
 */
export type FieldPath = string | readonly [string, string, string];

function findCellMap(ydoc: Y.Doc, cellId: string): Y.Map<unknown> | undefined {
  for (const cell of sharedCells(ydoc)) if (cell.get("id") === cellId) return cell;
  return undefined;
}

function findItemMap(items: Y.Array<Y.Map<unknown>>, key: string): Y.Map<unknown> | undefined {
  for (const item of items) {
    for (const field of ITEM_KEY_FIELDS) {
      const value = item.get(field);
      if (typeof value === "string") {
        if (value === key) return item;
        break;
      }
    }
  }
  return undefined;
}

/** The document title's Y.Text, or null before the document is filled. */
export function titleText(ydoc: Y.Doc): Y.Text | null {
  const title = sharedMeta(ydoc).get("title");
  return title instanceof Y.Text ? title : null;
}

/** The Y.Text behind one editor field, or null when the cell, item or field does not exist. */
export function fieldText(ydoc: Y.Doc, cellId: string, path: FieldPath): Y.Text | null {
  const cell = findCellMap(ydoc, cellId);
  if (!cell) return null;
  if (typeof path === "string") {
    const value = cell.get(path);
    return value instanceof Y.Text ? value : null;
  }
  const [arrayField, key, field] = path;
  const items = cell.get(arrayField);
  if (!(items instanceof Y.Array)) return null;
  const value = findItemMap(items as Y.Array<Y.Map<unknown>>, key)?.get(field);
  return value instanceof Y.Text ? value : null;
}

/**
 * Turns a Y.Text's content into `value` with one deletion and one insertion
 * around the common prefix and suffix, so concurrent typing elsewhere in the
 * text survives. Runs in one transaction (joining the current one, if any).
 */
export function replaceText(text: Y.Text, value: string, origin: unknown = null): void {
  if (text.doc) text.doc.transact(() => replaceTextNow(text, value), origin);
  else replaceTextNow(text, value);
}

function replaceTextNow(text: Y.Text, value: string): void {
  const current = text.toString();
  if (current === value) return;
  let start = 0;
  const shorter = Math.min(current.length, value.length);
  while (start < shorter && current.charCodeAt(start) === value.charCodeAt(start)) start += 1;
  let end = 0;
  while (end < shorter - start && current.charCodeAt(current.length - 1 - end) === value.charCodeAt(value.length - 1 - end)) end += 1;
  const removed = current.length - start - end;
  if (removed > 0) text.delete(start, removed);
  const inserted = value.slice(start, value.length - end);
  if (inserted !== "") text.insert(start, inserted);
}

// ---------------------------------------------------------------------------
// Reconciling: turn the shared state into a given document with few changes

function jsonEqual(a: unknown, b: unknown): boolean {
  if (a === b) return true;
  if (Array.isArray(a) || Array.isArray(b)) {
    if (!Array.isArray(a) || !Array.isArray(b) || a.length !== b.length) return false;
    return a.every((entry, i) => jsonEqual(entry, b[i]));
  }
  if (isObject(a) && isObject(b)) {
    const keys = Object.keys(a).filter((key) => a[key] !== undefined);
    const otherKeys = Object.keys(b).filter((key) => b[key] !== undefined);
    return keys.length === otherKeys.length && keys.every((key) => jsonEqual(a[key], b[key]));
  }
  return false;
}

/**
 * Indexes (into `order`) of a longest subsequence of `order` that is increasing:
 * the entries that can stay where they are while the others move.
 */
function longestIncreasing(order: number[]): Set<number> {
  const tails: number[] = [];
  const previous = new Array<number>(order.length).fill(-1);
  for (let i = 0; i < order.length; i += 1) {
    let lo = 0;
    let hi = tails.length;
    while (lo < hi) {
      const mid = (lo + hi) >> 1;
      if (order[tails[mid]!]! < order[i]!) lo = mid + 1;
      else hi = mid;
    }
    if (lo > 0) previous[i] = tails[lo - 1]!;
    tails[lo] = i;
  }
  const kept = new Set<number>();
  for (let i = tails.length > 0 ? tails[tails.length - 1]! : -1; i >= 0; i = previous[i]!) kept.add(i);
  return kept;
}

/**
 * Makes a Y.Array of maps hold `targets` in order: deletes items whose key is
 * gone or duplicated, keeps the longest run already in order, moves the rest
 * (a delete and a fresh insert) and updates the kept ones in place.
 */
function reconcileList(
  list: Y.Array<Y.Map<unknown>>,
  targets: JsonObject[],
  keyOfMap: (map: Y.Map<unknown>, index: number) => string,
  keyOfTarget: (target: JsonObject, index: number) => string,
  create: (target: JsonObject) => Y.Map<unknown>,
  update: (map: Y.Map<unknown>, target: JsonObject) => boolean,
): void {
  const targetIndex = new Map<string, number>();
  targets.forEach((target, index) => targetIndex.set(keyOfTarget(target, index), index));
  const seen = new Set<string>();
  const current = list.toArray().map((map, index) => ({ map, key: keyOfMap(map, index), index }));
  const present = current.filter(({ key }) => {
    if (!targetIndex.has(key) || seen.has(key)) return false;
    seen.add(key);
    return true;
  });
  const keptIndexes = longestIncreasing(present.map(({ key }) => targetIndex.get(key)!));
  const kept = new Set(present.filter((_, i) => keptIndexes.has(i)).map(({ index }) => index));
  for (let i = current.length - 1; i >= 0; i -= 1) if (!kept.has(i)) list.delete(i, 1);
  targets.forEach((target, index) => {
    const existing = index < list.length ? list.get(index) : undefined;
    if (existing && keyOfMap(existing, index) === keyOfTarget(target, index) && update(existing, target)) return;
    if (existing && keyOfMap(existing, index) === keyOfTarget(target, index)) list.delete(index, 1);
    list.insert(index, [create(target)]);
  });
}

function mapItemKey(map: Y.Map<unknown>, index: number): string {
  for (const field of ITEM_KEY_FIELDS) {
    const value = map.get(field);
    if (typeof value === "string") return `${field}:${value}`;
  }
  return `#${index}`;
}

/** Updates one cell's or item's fields to `target` in place. */
function reconcileMap(map: Y.Map<unknown>, target: JsonObject, level: "cell" | "item"): boolean {
  for (const key of Array.from(map.keys())) if (target[key] === undefined) map.delete(key);
  for (const [key, value] of Object.entries(target)) {
    if (value === undefined) continue;
    const existing = map.get(key);
    const plain = level === "cell" ? PLAIN_CELL_FIELDS.has(key) : (ITEM_KEY_FIELDS as readonly string[]).includes(key);
    if (typeof value === "string" && !plain) {
      if (existing instanceof Y.Text) replaceText(existing, value);
      else map.set(key, textOf(value));
    } else if (level === "cell" && isObjectArray(value)) {
      if (existing instanceof Y.Array) {
        reconcileList(existing as Y.Array<Y.Map<unknown>>, value, mapItemKey, itemKey, itemToYMap, (item, itemTarget) =>
          reconcileMap(item, itemTarget, "item"),
        );
      } else map.set(key, fieldToY(key, value));
    } else if (existing instanceof Y.AbstractType || !jsonEqual(existing, value)) {
      map.set(key, structuredClone(value));
    }
  }
  return true;
}

function reconcileCell(map: Y.Map<unknown>, target: JsonObject): boolean {
  // A cell that changed kind under the same id is a different cell.
  if (map.get("kind") !== target.kind) return false;
  return reconcileMap(map, target, "cell");
}

/**
 * Turns the shared state into `doc` in one transaction: text fields change by
 * their differing middle only, cells and rows are matched by id and only the
 * ones out of order move. Used for whole-document writes (a restored revision,
 * an import into an existing derivation) and by every typed operation below.
 * An empty Y.Doc is filled.
 */
export function replaceSharedDocument(ydoc: Y.Doc, doc: DerivationDocument, origin: unknown = null): void {
  ydoc.transact(() => {
    const meta = sharedMeta(ydoc);
    if (meta.get("schemaVersion") !== doc.schemaVersion) meta.set("schemaVersion", doc.schemaVersion);
    const title = meta.get("title");
    if (title instanceof Y.Text) replaceText(title, doc.title);
    else meta.set("title", textOf(doc.title));
    for (const key of Array.from(meta.keys())) if (key !== "schemaVersion" && key !== "title") meta.delete(key);
    reconcileList(
      sharedCells(ydoc),
      doc.cells as unknown as JsonObject[],
      (map, index) => (typeof map.get("id") === "string" ? `id:${map.get("id") as string}` : `#${index}`),
      (cell) => `id:${String(cell.id)}`,
      cellToYMap,
      reconcileCell,
    );
  }, origin);
}

// ---------------------------------------------------------------------------
// Typed operations

/**
 * Applies a document operation to the shared document in one transaction
 * (`origin` marks it, e.g. for an undo manager). It is checked exactly as the
 * pure operation is (`applyOperation`): a refused one throws the same
 * `DocumentError` and changes nothing. Returns the document after the change.
 */
export function applySharedOperation(ydoc: Y.Doc, op: DocumentOperation, origin: unknown = null): DerivationDocument {
  const next = applyOperation(yDocToDocument(ydoc), op);
  replaceSharedDocument(ydoc, next, origin);
  return next;
}

export function insertSharedCell(ydoc: Y.Doc, cell: Cell, index?: number, origin?: unknown): DerivationDocument {
  return applySharedOperation(ydoc, { type: "addCell", cell, index }, origin);
}

/** Moves a cell to `toIndex`. A move is a delete and an insert: an edit made to the cell at the same moment by someone else is lost. */
export function moveSharedCell(ydoc: Y.Doc, cellId: string, toIndex: number, origin?: unknown): DerivationDocument {
  return applySharedOperation(ydoc, { type: "moveCell", cellId, toIndex }, origin);
}

export function deleteSharedCell(ydoc: Y.Doc, cellId: string, origin?: unknown): DerivationDocument {
  return applySharedOperation(ydoc, { type: "deleteCell", cellId }, origin);
}

export function duplicateSharedCell(ydoc: Y.Doc, cellId: string, newCellId: string, origin?: unknown): DerivationDocument {
  return applySharedOperation(ydoc, { type: "duplicateCell", cellId, newCellId }, origin);
}

export function insertSharedRow(ydoc: Y.Doc, cellId: string, row: AnyRow, index?: number, origin?: unknown): DerivationDocument {
  return applySharedOperation(ydoc, { type: "addRow", cellId, row, index }, origin);
}

/** Moves a row within its cell; like a cell move, a delete and an insert. */
export function moveSharedRow(ydoc: Y.Doc, cellId: string, rowId: string, toIndex: number, origin?: unknown): DerivationDocument {
  return applySharedOperation(ydoc, { type: "moveRow", cellId, rowId, toIndex }, origin);
}

export function deleteSharedRow(ydoc: Y.Doc, cellId: string, rowId: string, origin?: unknown): DerivationDocument {
  return applySharedOperation(ydoc, { type: "deleteRow", cellId, rowId }, origin);
}

/** Changes fields of a row; renaming a coordinate carries its force entry along, as the pure operation does. */
export function updateSharedRow(ydoc: Y.Doc, cellId: string, rowId: string, patch: RowPatch, origin?: unknown): DerivationDocument {
  return applySharedOperation(ydoc, { type: "updateRow", cellId, rowId, patch }, origin);
}

export function setSharedCollapsed(ydoc: Y.Doc, cellId: string, collapsed: boolean, origin?: unknown): DerivationDocument {
  return applySharedOperation(ydoc, { type: "setCollapsed", cellId, collapsed }, origin);
}

/** Merges `patch` into a generated cell's settings (checked by the cell schema); the settings object is last writer wins. */
export function setSharedSettings(ydoc: Y.Doc, cellId: string, patch: Record<string, unknown>, origin?: unknown): DerivationDocument {
  return applySharedOperation(ydoc, { type: "updateSettings", cellId, patch }, origin);
}

export function setSharedCellTitle(ydoc: Y.Doc, cellId: string, title: string, origin?: unknown): DerivationDocument {
  return applySharedOperation(ydoc, { type: "setCellTitle", cellId, title }, origin);
}

export function setSharedTitle(ydoc: Y.Doc, title: string, origin?: unknown): DerivationDocument {
  return applySharedOperation(ydoc, { type: "setTitle", title }, origin);
}

export function setSharedForce(ydoc: Y.Doc, cellId: string, coordinate: string, expr: string, origin?: unknown): DerivationDocument {
  return applySharedOperation(ydoc, { type: "setForce", cellId, coordinate, expr }, origin);
}

export function removeSharedForce(ydoc: Y.Doc, cellId: string, coordinate: string, origin?: unknown): DerivationDocument {
  return applySharedOperation(ydoc, { type: "removeForce", cellId, coordinate }, origin);
}
