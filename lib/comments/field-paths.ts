import * as Y from "yjs";
import { fieldText, sharedCells, type FieldPath } from "@/lib/notebook/document/shared-doc";

/**
 * A field path as comments store it: "expr" for a cell's own text field,
 * "<array field>/<item key>/<field>" for a field of a row or entry.
 */
export function fieldPathText(path: FieldPath): string {
  return typeof path === "string" ? path : path.join("/");
}

export function fieldPathOf(text: string): FieldPath {
  const parts = text.split("/");
  return parts.length === 3 ? (parts as [string, string, string]) : text;
}

/** The Y.Text a stored field path names in the live document, or null. */
export function fieldTextOf(ydoc: Y.Doc, cellId: string, path: string): Y.Text | null {
  return fieldText(ydoc, cellId, fieldPathOf(path));
}

/**
 * Every text field of cell `cellId` whose content is `content`: how a selection
 * in an editor finds the field it belongs to when the editor does not say. Items
 * are keyed by their "id", or "coordinate" for entries that have none.
 */
export function fieldPathsWithContent(ydoc: Y.Doc, cellId: string, content: string): string[] {
  const cell = sharedCells(ydoc)
    .toArray()
    .find((candidate) => candidate.get("id") === cellId);
  if (!cell) return [];
  const found: string[] = [];
  for (const [field, value] of cell.entries()) {
    if (value instanceof Y.Text && value.toString() === content) found.push(field);
    if (value instanceof Y.Array) {
      for (const item of value.toArray()) {
        if (!(item instanceof Y.Map)) continue;
        const key = typeof item.get("id") === "string" ? item.get("id") : item.get("coordinate");
        if (typeof key !== "string") continue;
        for (const [itemField, itemValue] of item.entries()) {
          if (itemValue instanceof Y.Text && itemValue.toString() === content) found.push(`${field}/${key}/${itemField}`);
        }
      }
    }
  }
  return found;
}
