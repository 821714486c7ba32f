"use client";

/**
 * One expression, edited in CodeMirror 6. Controlled: the parent owns the text
 * (`value`) and hears every edit (`onChange`). One EditorView per mounted
 * editor, destroyed on unmount. `multiline`, `allowEmpty` and `checkSymbols`
 * are read when the editor mounts; everything else follows the props.
 *
 * The EditorView is built when the editor comes near the viewport (or gets
 * the focus); until then the text shows as plain, focusable monospace, so a
 * notebook with dozens of expressions renders quickly.
 */
import { useEffect, useId, useRef, useState } from "react";
import { Annotation, Compartment, EditorState, Transaction } from "@codemirror/state";
import { EditorView } from "@codemirror/view";
import { forEachDiagnostic, forceLinting, setDiagnosticsEffect } from "@codemirror/lint";
import { useNearViewport } from "../use-near-viewport";
import type { DocumentSymbols } from "@/lib/notebook/document";
import { EMPTY_SYMBOLS, setServerDiagnosticsEffect, setSymbolsEffect, type ExpressionDiagnostic } from "./context";
import { expressionExtensions } from "./extensions";

export interface ExpressionEditorProps {
  value: string;
  onChange: (value: string) => void;
  /** Accessible name of the editor (e.g. "Kinetic energy T"). */
  label: string;
  id?: string;
  /** The derivation's symbols, for completion and the local unknown-name check. */
  symbols?: DocumentSymbols;
  /** Diagnostics from the evaluator, as offsets into `diagnosticsFor`. */
  diagnostics?: readonly ExpressionDiagnostic[];
  /** The text the evaluator saw; its diagnostics are hidden once the text changes. Null: always shown. */
  diagnosticsFor?: string | null;
  multiline?: boolean;
  readOnly?: boolean;
  placeholder?: string;
  /** Blank is valid (optional expressions). */
  allowEmpty?: boolean;
  /** Flag names that are not among `symbols` (default: on when `symbols` is given). */
  checkSymbols?: boolean;
  /** Milliseconds of quiet before the text is checked (default 150). */
  lintDelay?: number;
  onEnter?: () => void;
  onBlur?: () => void;
  className?: string;
  "data-testid"?: string;
}

/** Marks transactions that bring the editor in line with `value`, so they do not echo to onChange. */
const external = Annotation.define<boolean>();

interface ShownDiagnostic {
  from: number;
  to: number;
  severity: string;
  message: string;
}

export function ExpressionEditor(props: ExpressionEditorProps) {
  const { value, label, symbols, diagnostics, diagnosticsFor = null, readOnly = false } = props;
  const wrapperRef = useRef<HTMLDivElement>(null);
  const hostRef = useRef<HTMLDivElement>(null);
  const viewRef = useRef<EditorView | null>(null);
  const near = useNearViewport(wrapperRef);
  const [focusRequested, setFocusRequested] = useState(false);
  const [mounted, setMounted] = useState(false);
  const active = near || focusRequested;
  const readOnlyCompartment = useRef(new Compartment());
  const labelCompartment = useRef(new Compartment());
  const callbacks = useRef({ onChange: props.onChange, onEnter: props.onEnter, onBlur: props.onBlur });
  callbacks.current = { onChange: props.onChange, onEnter: props.onEnter, onBlur: props.onBlur };
  const [shown, setShown] = useState<ShownDiagnostic[]>([]);
  const messagesId = useId();

  // Create the view once per mount (when first near the viewport); later prop changes are dispatched below.
  useEffect(() => {
    const host = hostRef.current;
    if (!host || !active) return;
    const serverItems = { text: diagnosticsFor, items: diagnostics ?? [] };
    const view = new EditorView({
      parent: host,
      state: EditorState.create({
        doc: value,
        extensions: [
          // First, so it outranks the label expressionExtensions sets: CodeMirror keeps the
          // highest-precedence value of an attribute, and this compartment follows `label`.
          labelCompartment.current.of(EditorView.contentAttributes.of({ "aria-label": label, "aria-describedby": messagesId })),
          expressionExtensions({
            label,
            id: props.id,
            multiline: props.multiline,
            placeholder: props.placeholder,
            symbols: symbols ?? EMPTY_SYMBOLS,
            diagnostics: serverItems,
            allowEmpty: props.allowEmpty,
            checkSymbols: props.checkSymbols ?? symbols !== undefined,
            lintDelay: props.lintDelay,
            onEnter: () => callbacks.current.onEnter?.(),
          }),
          readOnlyCompartment.current.of(readOnlyExtensions(readOnly)),
          EditorView.updateListener.of((update) => {
            if (update.docChanged && !update.transactions.some((tr) => tr.annotation(external))) {
              callbacks.current.onChange(update.state.doc.toString());
            }
            if (update.transactions.some((tr) => tr.effects.some((effect) => effect.is(setDiagnosticsEffect)))) {
              const list: ShownDiagnostic[] = [];
              forEachDiagnostic(update.state, (d, from, to) => list.push({ from, to, severity: d.severity, message: d.message }));
              setShown(list);
            }
            if (update.focusChanged && !update.view.hasFocus) callbacks.current.onBlur?.();
          }),
        ],
      }),
    });
    viewRef.current = view;
    setMounted(true);
    if (focusRequested) {
      // Focus came to the plain-text stand-in: continue at the end of the text.
      view.dispatch({ selection: { anchor: view.state.doc.length } });
      view.focus();
    }
    return () => {
      view.destroy();
      viewRef.current = null;
    };
    // Built once, when `active` turns true (it never turns back); the effects below follow prop changes.
  }, [active]);

  useEffect(() => {
    const view = viewRef.current;
    if (!view || view.state.doc.toString() === value) return;
    view.dispatch({
      changes: { from: 0, to: view.state.doc.length, insert: value },
      annotations: [external.of(true), Transaction.addToHistory.of(false)],
    });
  }, [value]);

  useEffect(() => {
    viewRef.current?.dispatch({ effects: setSymbolsEffect.of(symbols ?? EMPTY_SYMBOLS) });
  }, [symbols]);

  useEffect(() => {
    const view = viewRef.current;
    if (!view) return;
    view.dispatch({ effects: setServerDiagnosticsEffect.of({ text: diagnosticsFor, items: diagnostics ?? [] }) });
    forceLinting(view);
  }, [diagnostics, diagnosticsFor]);

  useEffect(() => {
    viewRef.current?.dispatch({ effects: readOnlyCompartment.current.reconfigure(readOnlyExtensions(readOnly)) });
  }, [readOnly]);

  useEffect(() => {
    viewRef.current?.dispatch({
      effects: labelCompartment.current.reconfigure(EditorView.contentAttributes.of({ "aria-label": label, "aria-describedby": messagesId })),
    });
  }, [label, messagesId]);

  return (
    <div ref={wrapperRef} className={props.className} data-testid={props["data-testid"]}>
      {!mounted && (
        <div
          className="overflow-hidden rounded border border-line bg-surface px-2 py-1.5 font-mono text-[0.95rem] whitespace-pre text-ink"
          role="textbox"
          aria-label={label}
          aria-readonly={readOnly || undefined}
          tabIndex={0}
          onFocus={() => setFocusRequested(true)}
        >
          {value === "" ? <span className="text-muted">{props.placeholder ?? "\u00a0"}</span> : value}
        </div>
      )}
      <div ref={hostRef} className="hn-expression-editor" aria-invalid={shown.some((d) => d.severity === "error") || undefined} />
      <ul id={messagesId} className="hn-diagnostics" aria-live="polite">
        {shown.map((d, index) => (
          <li key={`${d.from}-${d.to}-${index}`} data-severity={d.severity} className="hn-diagnostic">
            <span className="hn-diagnostic-column">col {d.from + 1}</span> {d.message}
          </li>
        ))}
      </ul>
    </div>
  );
}

function readOnlyExtensions(readOnly: boolean) {
  return [EditorState.readOnly.of(readOnly), EditorView.editable.of(!readOnly)];
}
