"use client";

/**
 * What the notebook's fields need from the shared document: the Y.Doc, the
 * origin of this person's edits, presence and the undo history. Without a
 * provider (previews, tests of single cells) fields stay plain controlled
 * inputs working on `DocumentOperation`s.
 */
import { createContext, useContext, type ReactNode } from "react";
import type * as Y from "yjs";
import { fieldText, titleText, type FieldPath } from "@/lib/notebook/document/shared-doc";
import type { SharedField } from "@/components/notebook/editor/collab";

export interface SharedFields {
  ydoc: Y.Doc;
  origin: unknown;
  awareness: unknown;
  undoManager: Y.UndoManager;
}

const SharedFieldsContext = createContext<SharedFields | null>(null);

export function SharedFieldsProvider({ value, children }: { value: SharedFields | null; children: ReactNode }) {
  return <SharedFieldsContext.Provider value={value}>{children}</SharedFieldsContext.Provider>;
}

export function useSharedFields(): SharedFields | null {
  return useContext(SharedFieldsContext);
}

/**
 * The Y.Text behind a field and everything an editor binds with, or null (no
 * shared document, or no such field yet). Looked up on every render: a cell or
 * row replaced by someone else brings a new Y.Text, and the editor rebinds.
 */
export function useSharedField(cellId: string, path: FieldPath): (SharedField & { origin: unknown }) | null {
  const shared = useSharedFields();
  if (!shared) return null;
  const text = fieldText(shared.ydoc, cellId, path);
  return text ? { text, awareness: shared.awareness, undoManager: shared.undoManager, origin: shared.origin } : null;
}

export function useSharedTitle(): { text: Y.Text; origin: unknown } | null {
  const shared = useSharedFields();
  const text = shared ? titleText(shared.ydoc) : null;
  return shared && text ? { text, origin: shared.origin } : null;
}
