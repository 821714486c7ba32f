/**
 * Inline diagnostics for an expression editor, from two sources:
 * the local parser (instant, at the column of the first problem; it is small
 * and has no symbolic library, so it is fine in the browser) together with a
 * check of names against the derivation's symbols, and the evaluator's
 * diagnostics passed in from outside (unknown symbol, unit mismatch naming the
 * term), shown while the text is the one they were computed for.
 */
import { linter, lintKeymap, type Diagnostic } from "@codemirror/lint";
import { keymap, type EditorView } from "@codemirror/view";
import { StateField, type Extension } from "@codemirror/state";
import { parseExpression, ExpressionError, TIME, walk } from "@/lib/mechanics/browser";
import type { DocumentSymbols } from "@/lib/notebook/document";
import { serverDiagnosticsField, setServerDiagnosticsEffect, symbolsField } from "./context";

export interface LocalCheckOptions {
  /** Blank text is fine (optional fields such as a force); otherwise "expression is empty". */
  allowEmpty?: boolean;
  /**
   * The field has held text at some point (default true). A required field that
   * was never written stays quiet: a new notebook opens without a warning per cell.
   */
  written?: boolean;
  /** Warn about names the derivation does not define. Off when the symbols are not known. */
  checkSymbols?: boolean;
}

/** Diagnostics the browser can find alone: parse errors and names the derivation lacks. */
export function localDiagnostics(text: string, symbols: DocumentSymbols, options: LocalCheckOptions = {}): Diagnostic[] {
  if (text.trim() === "") {
    return options.allowEmpty || options.written === false
      ? []
      : [{ from: 0, to: text.length, severity: "warning", message: "expression is empty", source: "parser" }];
  }
  try {
    const tree = parseExpression(text);
    if (!options.checkSymbols) return [];
    const multipliers = symbols.multipliers ?? [];
    const known = new Set([TIME, ...symbols.coordinates, ...symbols.parameters, ...symbols.inputs, ...symbols.definitions, ...multipliers]);
    const rateless = new Set([...symbols.parameters, ...symbols.inputs, ...multipliers]);
    const found: Diagnostic[] = [];
    walk(tree, (node) => {
      if (node.kind !== "sym") return;
      if (!known.has(node.name)) found.push({ from: node.start, to: node.end, severity: "error", message: `unknown symbol "${node.name}"`, source: "symbols" });
      else if (node.order > 0 && rateless.has(node.name))
        found.push({
          from: node.start,
          to: node.end,
          severity: "error",
          message: `"${node.name}" is ${symbols.parameters.includes(node.name) ? "a parameter" : multipliers.includes(node.name) ? "a multiplier" : "an input"} and has no rate`,
          source: "symbols",
        });
    });
    return found;
  } catch (error) {
    if (!(error instanceof ExpressionError)) throw error;
    const from = Math.min(error.position, text.length);
    return [{ from, to: Math.min(text.length, from + error.length), severity: "error", message: error.message, source: "parser" }];
  }
}

function serverDiagnostics(view: EditorView, local: readonly Diagnostic[]): Diagnostic[] {
  const { text, items } = view.state.field(serverDiagnosticsField);
  const current = view.state.doc.toString();
  if (text !== null && text !== current) return [];
  return items
    .map((item): Diagnostic => {
      const from = Math.max(0, Math.min(item.from, current.length));
      return {
        from,
        to: Math.max(from, Math.min(item.to, current.length)),
        severity: item.severity ?? "error",
        message: item.message,
        source: item.source ?? "evaluator",
      };
    })
    .filter((item) => !local.some((seen) => seen.from === item.from && seen.to === item.to));
}

/** Whether the editor's text has ever been non-empty (typed, pasted or loaded). */
export const everWrittenField = StateField.define<boolean>({
  create: (state) => state.doc.length > 0,
  update: (written, tr) => written || tr.newDoc.length > 0,
});

/** Lint for an expression editor; `delay` is how long typing must pause (ms). */
export function expressionDiagnostics(options: LocalCheckOptions & { delay?: number } = {}): Extension[] {
  return [
    linter(
      (view) => {
        const local = localDiagnostics(view.state.doc.toString(), view.state.field(symbolsField), { ...options, written: view.state.field(everWrittenField) });
        return [...local, ...serverDiagnostics(view, local)];
      },
      {
        delay: options.delay ?? 150,
        needsRefresh: (update) =>
          update.transactions.some((tr) => tr.effects.some((effect) => effect.is(setServerDiagnosticsEffect))) ||
          update.startState.field(symbolsField) !== update.state.field(symbolsField),
      },
    ),
    everWrittenField,
    keymap.of(lintKeymap),
  ];
}
