/**
 * The extension set of one expression editor, assembled from the feature
 * factories (language, completion, diagnostics) plus editing basics.
 */
import { closeBrackets, closeBracketsKeymap, completionKeymap } from "@codemirror/autocomplete";
import { defaultKeymap, history, historyKeymap } from "@codemirror/commands";
import { EditorState, Prec, type Extension } from "@codemirror/state";
import { EditorView, keymap, placeholder as placeholderText } from "@codemirror/view";
import { ySyncAnnotation } from "y-codemirror.next";
import { sharedFieldExtensions, type SharedField } from "./collab";
import { symbolCompletion } from "./completion";
import { editorContext, type ServerDiagnostics } from "./context";
import { expressionDiagnostics, type LocalCheckOptions } from "./diagnostics";
import { expressionLanguage } from "./language";
import type { DocumentSymbols } from "@/lib/notebook/document";
import { spellGreekLetters } from "@/lib/mechanics/browser";

/**
 * Keeps the text on one line: typed or pasted line breaks become spaces, and
 * Enter runs `onEnter` (if any) instead of breaking the line.
 */
export function singleLine(onEnter?: (view: EditorView) => void): Extension[] {
  return [
    EditorState.transactionFilter.of((tr) => {
      // Someone else's edit, already in the shared text: rewriting it here would part the editor from the text.
      if (!tr.docChanged || tr.newDoc.lines === 1 || tr.annotation(ySyncAnnotation)) return tr;
      const changes: { from: number; to: number; insert: string }[] = [];
      tr.changes.iterChanges((from, to, _fromB, _toB, inserted) => changes.push({ from, to, insert: inserted.toString().replace(/\n/g, " ") }));
      // A line break and a space have the same length, so the transaction's selection still fits.
      return { changes, selection: tr.selection, effects: tr.effects, scrollIntoView: tr.scrollIntoView, userEvent: "input" };
    }),
    Prec.high(
      keymap.of([
        {
          key: "Enter",
          run: (view) => {
            onEnter?.(view);
            return true;
          },
        },
      ]),
    ),
  ];
}

/**
 * Reads a typed or pasted Greek letter as the name it renders (θ becomes
 * `theta`), so the expression says what the analyst meant.
 */
export function greekLettersAsNames(): Extension {
  return EditorState.transactionFilter.of((tr) => {
    if (!tr.docChanged || tr.annotation(ySyncAnnotation)) return tr;
    let spelled = false;
    const changes: { from: number; to: number; insert: string }[] = [];
    tr.changes.iterChanges((from, to, _fromB, _toB, inserted) => {
      const text = inserted.toString();
      const insert = spellGreekLetters(text);
      if (insert !== text) spelled = true;
      changes.push({ from, to, insert });
    });
    if (!spelled) return tr;
    const spec = tr.startState.changes(changes);
    // The selection the edit asked for, carried over to the spelled text: a caret after the letter ends after its name.
    const selection = tr.newSelection.map(tr.changes.invertedDesc, 1).map(spec, 1);
    return { changes: spec, selection, effects: tr.effects, scrollIntoView: tr.scrollIntoView, userEvent: "input" };
  });
}

export const expressionTheme = EditorView.theme({
  "&": {
    fontFamily: "var(--font-plex-mono), ui-monospace, monospace",
    fontSize: "0.95rem",
    backgroundColor: "var(--surface, #fbf8f2)",
    color: "var(--ink, #24272c)",
    border: "1px solid var(--line, #d8cfbd)",
    borderRadius: "4px",
  },
  "&.cm-focused": { outline: "2px solid var(--action, #0f5f63)", outlineOffset: "1px" },
  ".cm-content": { padding: "6px 8px", caretColor: "var(--action, #0f5f63)" },
  ".cm-line": { padding: "0" },
  ".cm-scroller": { fontFamily: "inherit", overflowX: "auto" },
  ".cm-matchingBracket": { backgroundColor: "var(--action-soft, #d9e9e6)", outline: "none" },
  ".cm-nonmatchingBracket": { color: "var(--danger, #b3261e)" },
  // A hint, not content: italic sans in a lighter tone, unlike the monospace expression text.
  ".cm-placeholder": {
    color: "var(--muted, #5c6169)",
    opacity: "0.75",
    fontStyle: "italic",
    fontFamily: "var(--font-plex-sans), system-ui, sans-serif",
    fontSize: "0.85rem",
  },
  ".cm-tooltip": {
    fontFamily: "var(--font-plex-sans), system-ui, sans-serif",
    backgroundColor: "var(--surface, #fbf8f2)",
    border: "1px solid var(--line, #d8cfbd)",
  },
  ".cm-tooltip-autocomplete > ul > li[aria-selected]": { backgroundColor: "var(--action, #0f5f63)", color: "var(--surface, #fbf8f2)" },
  ".cm-lintRange-error": { backgroundImage: "none", textDecoration: "underline wavy var(--danger, #b3261e)", textUnderlineOffset: "3px" },
  ".cm-lintRange-warning": { backgroundImage: "none", textDecoration: "underline wavy var(--seal, #8c6a17)", textUnderlineOffset: "3px" },
});

export interface ExpressionExtensionsOptions extends LocalCheckOptions {
  label: string;
  id?: string;
  multiline?: boolean;
  placeholder?: string;
  symbols?: DocumentSymbols;
  diagnostics?: ServerDiagnostics;
  lintDelay?: number;
  onEnter?: (view: EditorView) => void;
  /** Bound to a field of the shared document: its Y.Text, presence and the document's undo history. */
  shared?: SharedField;
}

/** Everything an expression editor needs except read-only state and change wiring. */
export function expressionExtensions(options: ExpressionExtensionsOptions): Extension[] {
  return [
    editorContext({ symbols: options.symbols, diagnostics: options.diagnostics }),
    expressionLanguage(),
    // A shared field undoes through the document's history (every cell, this person's edits only).
    options.shared ? sharedFieldExtensions(options.shared) : history(),
    closeBrackets(),
    greekLettersAsNames(),
    symbolCompletion(),
    expressionDiagnostics({ allowEmpty: options.allowEmpty, checkSymbols: options.checkSymbols, delay: options.lintDelay }),
    options.multiline ? EditorView.lineWrapping : singleLine(options.onEnter),
    keymap.of([...closeBracketsKeymap, ...completionKeymap, ...(options.shared ? [] : historyKeymap), ...defaultKeymap]),
    EditorView.contentAttributes.of({
      "aria-label": options.label,
      "aria-multiline": options.multiline ? "true" : "false",
      role: "textbox",
      spellcheck: "false",
      autocapitalize: "off",
      autocorrect: "off",
      ...(options.id ? { id: options.id } : {}),
    }),
    options.placeholder ? placeholderText(options.placeholder) : [],
    expressionTheme,
  ];
}
