/**
 * What an expression editor knows about its derivation: the symbols it may
 * use and the evaluator's diagnostics for its text. Both live in editor state
 * and change through effects, so completion and lint always read the latest.
 */
import { StateEffect, StateField, type Extension } from "@codemirror/state";
import type { DocumentSymbols } from "@/lib/notebook/document";

export const EMPTY_SYMBOLS: DocumentSymbols = { coordinates: [], parameters: [], inputs: [], definitions: [] };

/** A diagnostic from outside the editor (the evaluator), as character offsets into the text. */
export interface ExpressionDiagnostic {
  from: number;
  to: number;
  message: string;
  severity?: "error" | "warning" | "info";
  /** Shown before the message, e.g. "unit" or "evaluator". */
  source?: string;
}

export interface ServerDiagnostics {
  /** The text the diagnostics were computed for; they are hidden once the text differs. */
  text: string | null;
  items: readonly ExpressionDiagnostic[];
}

export const setSymbolsEffect = StateEffect.define<DocumentSymbols>();
export const setServerDiagnosticsEffect = StateEffect.define<ServerDiagnostics>();

export const symbolsField = StateField.define<DocumentSymbols>({
  create: () => EMPTY_SYMBOLS,
  update(value, tr) {
    for (const effect of tr.effects) if (effect.is(setSymbolsEffect)) value = effect.value;
    return value;
  },
});

export const serverDiagnosticsField = StateField.define<ServerDiagnostics>({
  create: () => ({ text: null, items: [] }),
  update(value, tr) {
    for (const effect of tr.effects) if (effect.is(setServerDiagnosticsEffect)) value = effect.value;
    return value;
  },
});

export function editorContext(initial: { symbols?: DocumentSymbols; diagnostics?: ServerDiagnostics } = {}): Extension[] {
  return [symbolsField.init(() => initial.symbols ?? EMPTY_SYMBOLS), serverDiagnosticsField.init(() => initial.diagnostics ?? { text: null, items: [] })];
}
