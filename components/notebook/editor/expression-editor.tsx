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
 *
 * With `shared`, the editor is bound to a Y.Text of the shared document
 * instead: it starts from the text, edits flow through it (`value` and
 * `onChange` are then only the document's copy), and it exists only while on
 * screen or focused, since every bound editor listens to everyone's cursors.
 */
import { useEffect, useId, useLayoutEffect, useRef, useState } from "react";
import { useNearViewport } from "../use-near-viewport";
import type { DocumentSymbols } from "@/lib/notebook/document";
import type { SharedField } from "./collab";
import type { ExpressionDiagnostic } from "./context";
import type { ExpressionViewHandle, ShownDiagnostic } from "./expression-view";

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
  /** The editor (or its plain-text stand-in) got the focus. */
  onFocus?: () => void;
  /** Bound to the shared document (see above). */
  shared?: SharedField;
  className?: string;
  "data-testid"?: string;
}

export function ExpressionEditor(props: ExpressionEditorProps) {
  const { value, label, symbols, diagnostics, diagnosticsFor = null, readOnly = false } = props;
  const wrapperRef = useRef<HTMLDivElement>(null);
  const hostRef = useRef<HTMLDivElement>(null);
  const viewRef = useRef<ExpressionViewHandle | null>(null);
  // The view is rebuilt while focused (its shared text was replaced): give the new one the focus back.
  const refocus = useRef(false);
  const shared = props.shared;
  const near = useNearViewport(wrapperRef, "400px", { sticky: !shared });
  const [focusRequested, setFocusRequested] = useState(false);
  const [focused, setFocused] = useState(false);
  const [mounted, setMounted] = useState(false);
  const active = shared ? near || focused || focusRequested : near || focusRequested;
  const sharedText = shared?.text;
  const callbacks = useRef({ onChange: props.onChange, onEnter: props.onEnter, onBlur: props.onBlur });
  // The latest props, read when the lazily loaded view is created (its options are fixed from then on).
  const latestProps = { ...props, value, label, symbols, diagnostics, diagnosticsFor, readOnly, focusRequested };
  const latest = useRef(latestProps);
  // Refs are written after render, never during it; the view reads them from its own callbacks and effects.
  useLayoutEffect(() => {
    callbacks.current = { onChange: props.onChange, onEnter: props.onEnter, onBlur: props.onBlur };
    latest.current = latestProps;
  });
  const [shown, setShown] = useState<ShownDiagnostic[]>([]);
  const messagesId = useId();

  // Load CodeMirror and create the view once per mount (when first near the viewport or focused);
  // later prop changes are forwarded by the effects below.
  useEffect(() => {
    const host = hostRef.current;
    if (!host || !active) return;
    let cancelled = false;
    let handle: ExpressionViewHandle | null = null;
    void import("./expression-view").then(({ createExpressionView }) => {
      if (cancelled) return;
      const now = latest.current;
      handle = createExpressionView({
        parent: host,
        value: now.value,
        label: now.label,
        describedBy: messagesId,
        id: now.id,
        multiline: now.multiline,
        placeholder: now.placeholder,
        symbols: now.symbols,
        diagnostics: { text: now.diagnosticsFor, items: now.diagnostics ?? [] },
        allowEmpty: now.allowEmpty,
        checkSymbols: now.checkSymbols ?? now.symbols !== undefined,
        lintDelay: now.lintDelay,
        readOnly: now.readOnly,
        shared: now.shared,
        onChange: (text) => callbacks.current.onChange(text),
        onEnter: () => callbacks.current.onEnter?.(),
        onBlur: () => callbacks.current.onBlur?.(),
        onDiagnostics: setShown,
      });
      viewRef.current = handle;
      setMounted(true);
      // Focus came to the plain-text stand-in: continue at the end of the text.
      if (now.focusRequested || refocus.current) {
        refocus.current = false;
        handle.focusAtEnd();
        // A shared editor stays while focused; after that, only while on screen.
        if (now.shared) setFocusRequested(false);
      }
    });
    return () => {
      cancelled = true;
      refocus.current = Boolean(handle && host.contains(host.ownerDocument.activeElement));
      handle?.destroy();
      viewRef.current = null;
      setMounted(false);
    };
    // Built when `active` turns true (again, for a shared editor back on screen) or the shared text is another;
    // the effects below follow other prop changes.
  }, [active, messagesId, sharedText]);

  useEffect(() => {
    viewRef.current?.setValue(value);
  }, [value]);

  useEffect(() => {
    viewRef.current?.setSymbols(symbols);
  }, [symbols]);

  useEffect(() => {
    viewRef.current?.setDiagnostics({ text: diagnosticsFor, items: diagnostics ?? [] });
  }, [diagnostics, diagnosticsFor]);

  useEffect(() => {
    viewRef.current?.setReadOnly(readOnly);
  }, [readOnly]);

  useEffect(() => {
    viewRef.current?.setLabel(label, messagesId);
  }, [label, messagesId]);

  return (
    <div
      ref={wrapperRef}
      className={props.className}
      data-testid={props["data-testid"]}
      onFocus={() => {
        setFocused(true);
        props.onFocus?.();
      }}
      onBlur={(event) => {
        if (!event.currentTarget.contains(event.relatedTarget as Node | null)) setFocused(false);
      }}
    >
      {!mounted && (
        <div
          className="overflow-hidden rounded border border-line bg-surface px-2 py-1.5 font-mono text-[0.95rem] whitespace-pre text-ink"
          role="textbox"
          aria-label={label}
          aria-readonly={readOnly || undefined}
          tabIndex={0}
          onFocus={() => setFocusRequested(true)}
        >
          {value === "" ? <span className="font-sans text-[0.85rem] italic text-muted opacity-75">{props.placeholder ?? "\u00a0"}</span> : value}
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
