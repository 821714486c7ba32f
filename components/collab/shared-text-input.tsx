"use client";

/**
 * An <input> or <textarea> bound to a Y.Text: typing becomes the smallest
 * delete-and-insert on the shared text (so two people typing in one field
 * merge instead of overwriting each other), and a remote change moves this
 * person's caret along with the text around it.
 */
import {
  forwardRef,
  useCallback,
  useEffect,
  useImperativeHandle,
  useLayoutEffect,
  useRef,
  useState,
  type ChangeEvent,
  type InputHTMLAttributes,
  type RefObject,
  type TextareaHTMLAttributes,
} from "react";
import type * as Y from "yjs";

type FieldElement = HTMLInputElement | HTMLTextAreaElement;

interface Binding {
  text: Y.Text;
  /** The origin of this client's edits (tracked by the document's undo history). */
  origin: unknown;
  /** Rewrites typed text before it is stored (e.g. θ → theta in a name). */
  transformInsert?: (inserted: string) => string;
  /** Runs inside the edit's transaction with the text before and after (e.g. carry a renamed coordinate's force). */
  onEdit?: (before: string, after: string) => void;
  /** Read-only fields never write (whatever event reaches them). */
  readOnly?: boolean;
}

/** The one change that turns `before` into `after`: a common prefix and suffix kept, the middle replaced. */
export function textChange(before: string, after: string): { index: number; remove: number; insert: string } {
  let start = 0;
  const max = Math.min(before.length, after.length);
  while (start < max && before[start] === after[start]) start += 1;
  let end = 0;
  while (end < max - start && before[before.length - 1 - end] === after[after.length - 1 - end]) end += 1;
  return { index: start, remove: before.length - start - end, insert: after.slice(start, after.length - end) };
}

/**
 * Moves a caret offset through a Y.Text delta: text inserted before it pushes
 * it on, text deleted before it pulls it back (an insert exactly at the caret
 * leaves it where it is).
 */
export function mapThroughDelta(offset: number, delta: readonly { insert?: unknown; delete?: number; retain?: number }[]): number {
  let oldPosition = 0;
  let mapped = offset;
  for (const op of delta) {
    if (oldPosition >= offset) break;
    if (op.retain !== undefined) oldPosition += op.retain;
    else if (op.delete !== undefined) {
      mapped -= Math.min(op.delete, offset - oldPosition);
      oldPosition += op.delete;
    } else if (typeof op.insert === "string") mapped += op.insert.length;
  }
  return Math.max(0, mapped);
}

function useSharedValue(binding: Binding, ref: RefObject<FieldElement | null>) {
  const { text, origin } = binding;
  const [value, setValue] = useState(() => text.toString());
  const selection = useRef<[number, number] | null>(null);

  useEffect(() => {
    // eslint-disable-next-line react-hooks/set-state-in-effect -- a new Y.Text: show its content
    setValue(text.toString());
    const observer = (event: Y.YTextEvent, transaction: Y.Transaction) => {
      const element = ref.current;
      if (transaction.origin !== origin && element && element.ownerDocument.activeElement === element) {
        const delta = event.delta as { insert?: unknown; delete?: number; retain?: number }[];
        selection.current = [mapThroughDelta(element.selectionStart ?? 0, delta), mapThroughDelta(element.selectionEnd ?? 0, delta)];
      }
      setValue(text.toString());
    };
    text.observe(observer);
    return () => text.unobserve(observer);
  }, [text, origin, ref]);

  useLayoutEffect(() => {
    const element = ref.current;
    const wanted = selection.current;
    if (!element || !wanted) return;
    selection.current = null;
    element.setSelectionRange(Math.min(wanted[0], value.length), Math.min(wanted[1], value.length));
  }, [value, ref]);

  const onChange = useCallback(
    (event: ChangeEvent<FieldElement>) => {
      if (binding.readOnly) return;
      const before = text.toString();
      const typed = event.target.value;
      const change = textChange(before, typed);
      const insert = binding.transformInsert ? binding.transformInsert(change.insert) : change.insert;
      const doc = text.doc;
      const apply = () => {
        if (change.remove > 0) text.delete(change.index, change.remove);
        if (insert) text.insert(change.index, insert);
        binding.onEdit?.(before, text.toString());
      };
      if (doc) doc.transact(apply, origin);
      else apply();
      if (insert !== change.insert) {
        const caret = change.index + insert.length;
        selection.current = [caret, caret];
      }
      setValue(text.toString());
    },
    [text, origin, binding],
  );

  return { value, onChange };
}

export type SharedInputProps = Binding & Omit<InputHTMLAttributes<HTMLInputElement>, "value" | "onChange" | "defaultValue">;

export const SharedInput = forwardRef<HTMLInputElement, SharedInputProps>(function SharedInput({ text, origin, transformInsert, onEdit, ...rest }, outer) {
  const ref = useRef<HTMLInputElement>(null);
  useImperativeHandle(outer, () => ref.current!, []);
  const { value, onChange } = useSharedValue({ text, origin, transformInsert, onEdit, readOnly: rest.readOnly }, ref);
  return <input {...rest} ref={ref} value={value} onChange={onChange} data-shared-field="" />;
});

export type SharedTextareaProps = Binding & Omit<TextareaHTMLAttributes<HTMLTextAreaElement>, "value" | "onChange" | "defaultValue">;

export const SharedTextarea = forwardRef<HTMLTextAreaElement, SharedTextareaProps>(function SharedTextarea(
  { text, origin, transformInsert, onEdit, ...rest },
  outer,
) {
  const ref = useRef<HTMLTextAreaElement>(null);
  useImperativeHandle(outer, () => ref.current!, []);
  const { value, onChange } = useSharedValue({ text, origin, transformInsert, onEdit, readOnly: rest.readOnly }, ref);
  return <textarea {...rest} ref={ref} value={value} onChange={onChange} data-shared-field="" />;
});
