/**
 * Everything CodeMirror in one module, loaded by ExpressionEditor on first use
 * (`import("./expression-view")`), so the editor library stays out of the
 * notebook's first-load bundle while the plain-text stand-in shows the value.
 */
import { Annotation, Compartment, EditorState, Transaction } from "@codemirror/state";
import { EditorView } from "@codemirror/view";
import { forEachDiagnostic, forceLinting, setDiagnosticsEffect } from "@codemirror/lint";
import type { DocumentSymbols } from "@/lib/notebook/document";
import { pageNonce } from "@/lib/security/page-nonce";
import type { SharedField } from "./collab";
import { EMPTY_SYMBOLS, setServerDiagnosticsEffect, setSymbolsEffect, type ExpressionDiagnostic } from "./context";
import { expressionExtensions } from "./extensions";

/** Marks transactions that bring the editor in line with `value`, so they do not echo to onChange. */
const external = Annotation.define<boolean>();

export interface ShownDiagnostic {
  from: number;
  to: number;
  severity: string;
  message: string;
}

export interface ExpressionViewOptions {
  parent: HTMLElement;
  value: string;
  label: string;
  describedBy: string;
  id?: string;
  multiline?: boolean;
  placeholder?: string;
  symbols?: DocumentSymbols;
  diagnostics: { text: string | null; items: readonly ExpressionDiagnostic[] };
  allowEmpty?: boolean;
  checkSymbols: boolean;
  lintDelay?: number;
  readOnly: boolean;
  /**
   * Bound to a Y.Text of the shared document: the editor starts from the text's
   * content, and edits (this person's and everyone else's) flow through it.
   */
  shared?: SharedField;
  onChange: (value: string) => void;
  onEnter: () => void;
  onBlur: () => void;
  onDiagnostics: (shown: ShownDiagnostic[]) => void;
}

/** One mounted editor; the React component forwards prop changes through these methods. */
export interface ExpressionViewHandle {
  setValue(value: string): void;
  setSymbols(symbols: DocumentSymbols | undefined): void;
  setDiagnostics(diagnostics: { text: string | null; items: readonly ExpressionDiagnostic[] }): void;
  setReadOnly(readOnly: boolean): void;
  setLabel(label: string, describedBy: string): void;
  focusAtEnd(): void;
  destroy(): void;
}

function readOnlyExtensions(readOnly: boolean) {
  return [EditorState.readOnly.of(readOnly), EditorView.editable.of(!readOnly)];
}

function labelAttributes(label: string, describedBy: string) {
  return EditorView.contentAttributes.of({ "aria-label": label, "aria-describedby": describedBy });
}

export function createExpressionView(options: ExpressionViewOptions): ExpressionViewHandle {
  const readOnlyCompartment = new Compartment();
  const labelCompartment = new Compartment();
  const view = new EditorView({
    parent: options.parent,
    state: EditorState.create({
      // A fresh state from the shared text itself: the binding assumes the editor starts equal to it.
      doc: options.shared ? options.shared.text.toString() : options.value,
      extensions: [
        // First, so it outranks the label expressionExtensions sets: CodeMirror keeps the
        // highest-precedence value of an attribute, and this compartment follows `label`.
        labelCompartment.of(labelAttributes(options.label, options.describedBy)),
        expressionExtensions({
          label: options.label,
          id: options.id,
          multiline: options.multiline,
          placeholder: options.placeholder,
          symbols: options.symbols ?? EMPTY_SYMBOLS,
          diagnostics: options.diagnostics,
          allowEmpty: options.allowEmpty,
          checkSymbols: options.checkSymbols,
          lintDelay: options.lintDelay,
          onEnter: options.onEnter,
          shared: options.shared,
        }),
        readOnlyCompartment.of(readOnlyExtensions(options.readOnly)),
        // CodeMirror's theme goes into a <style> element, which the page's policy allows only with its nonce.
        EditorView.cspNonce.of(pageNonce() ?? ""),
        EditorView.updateListener.of((update) => {
          if (update.docChanged && !update.transactions.some((tr) => tr.annotation(external))) {
            options.onChange(update.state.doc.toString());
          }
          if (update.transactions.some((tr) => tr.effects.some((effect) => effect.is(setDiagnosticsEffect)))) {
            const list: ShownDiagnostic[] = [];
            forEachDiagnostic(update.state, (d, from, to) => list.push({ from, to, severity: d.severity, message: d.message }));
            options.onDiagnostics(list);
          }
          if (update.focusChanged && !update.view.hasFocus) options.onBlur();
        }),
      ],
    }),
  });

  return {
    setValue(value) {
      // A shared editor follows its Y.Text; the document's copy of the text arrives a frame later.
      if (options.shared || view.state.doc.toString() === value) return;
      view.dispatch({
        changes: { from: 0, to: view.state.doc.length, insert: value },
        annotations: [external.of(true), Transaction.addToHistory.of(false)],
      });
    },
    setSymbols(symbols) {
      view.dispatch({ effects: setSymbolsEffect.of(symbols ?? EMPTY_SYMBOLS) });
    },
    setDiagnostics(diagnostics) {
      view.dispatch({ effects: setServerDiagnosticsEffect.of(diagnostics) });
      forceLinting(view);
    },
    setReadOnly(readOnly) {
      view.dispatch({ effects: readOnlyCompartment.reconfigure(readOnlyExtensions(readOnly)) });
    },
    setLabel(label, describedBy) {
      view.dispatch({ effects: labelCompartment.reconfigure(labelAttributes(label, describedBy)) });
    },
    focusAtEnd() {
      view.dispatch({ selection: { anchor: view.state.doc.length } });
      view.focus();
    },
    destroy() {
      view.destroy();
    },
  };
}
