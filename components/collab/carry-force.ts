/**
 * Renaming a coordinate in the shared document carries its generalized force
 * along (the force entry is keyed by the coordinate's name), exactly as the
 * `updateRow` document operation does, so typing a new name character by
 * character never orphans the force. Runs inside the rename's transaction.
 */
import * as Y from "yjs";
import { sharedCells } from "@/lib/notebook/document/shared-doc";

function coordinateNames(cells: Y.Map<unknown>[]): string[] {
  const names: string[] = [];
  for (const cell of cells) {
    if (cell.get("kind") !== "coordinates") continue;
    const rows = cell.get("rows");
    if (!(rows instanceof Y.Array)) continue;
    for (const row of (rows as Y.Array<Y.Map<unknown>>).toArray()) names.push(String(row.get("name") ?? ""));
  }
  return names;
}

export function carryForceOnRename(ydoc: Y.Doc, from: string, to: string): void {
  if (from === "" || from === to) return;
  const cells = sharedCells(ydoc).toArray();
  // Another coordinate still has the old name: the force stays with it.
  if (coordinateNames(cells).includes(from)) return;
  for (const cell of cells) {
    if (cell.get("kind") !== "forces") continue;
    const entries = cell.get("entries");
    if (!(entries instanceof Y.Array)) continue;
    const list = (entries as Y.Array<Y.Map<unknown>>).toArray();
    if (list.some((entry) => entry.get("coordinate") === to)) continue;
    for (const entry of list) if (entry.get("coordinate") === from) entry.set("coordinate", to);
  }
}
