"use client";

import clsx from "clsx";
import { useEffect, useId, useRef, useState, type DragEvent, type KeyboardEvent, type ReactNode } from "react";
import { CellCommentCount } from "@/components/comments/cell-comment-count";
import { CELL_LABELS, isGeneratedCell, type Cell, type CellKind } from "@/lib/notebook/document";

/** Keyboard shortcuts that act on the cell holding the focus (listed in the help dialog). */
export const CELL_SHORTCUTS: readonly { keys: string; description: string }[] = [
  { keys: "Alt+↑", description: "Move the cell up" },
  { keys: "Alt+↓", description: "Move the cell down" },
  { keys: "Alt+Shift+D", description: "Duplicate the cell" },
  { keys: "Alt+Shift+Backspace", description: "Delete the cell (undo from the notice)" },
  { keys: "Alt+Shift+C", description: "Collapse or expand the cell" },
];

/** A short mark per kind; the full label is read out with it. */
const KIND_MARKS: Record<CellKind, string> = {
  coordinates: "q",
  parameters: "p",
  inputs: "u",
  definitions: "≔",
  constraints: "g=0",
  "rate-constraints": "a·q'",
  outputs: "y",
  kinetic: "T",
  potential: "V",
  dissipation: "D",
  forces: "Q",
  note: "¶",
  equations: "EL",
  conserved: "h",
  linearization: "A·B",
  "code-export": "{ }",
  simulation: "t→",
  study: "p±",
};

export interface CellFrameProps {
  cell: Cell;
  index: number;
  count: number;
  readOnly?: boolean;
  /** Generated cells: the results shown belong to an older version of the derivation. */
  stale?: boolean;
  /** Generated cells: an evaluation is running; the last results stay visible meanwhile. */
  busy?: boolean;
  /** Singletons (kinetic, potential, …) cannot be duplicated. */
  canDuplicate: boolean;
  onCollapse: (collapsed: boolean) => void;
  onDuplicate: () => void;
  onDelete: () => void;
  onMove: (delta: -1 | 1) => void;
  /** Drag-and-drop wiring from the notebook. */
  onDragStart?: (event: DragEvent<HTMLElement>) => void;
  onDragEnd?: () => void;
  onDragOver?: (event: DragEvent<HTMLElement>) => void;
  onDrop?: (event: DragEvent<HTMLElement>) => void;
  dragging?: boolean;
  dropSide?: "before" | "after" | null;
  /** Extra controls in the header (e.g. a language picker). */
  actions?: ReactNode;
  children: ReactNode;
}

export function CellFrame(props: CellFrameProps) {
  const { cell, index, count, readOnly = false, stale = false } = props;
  const title = cell.title ?? CELL_LABELS[cell.kind];
  const bodyId = useId();
  const generated = isGeneratedCell(cell);

  function onKeyDown(event: KeyboardEvent<HTMLElement>) {
    if (readOnly || !event.altKey || event.ctrlKey || event.metaKey) return;
    const key = event.key.toLowerCase();
    let handled = true;
    if (event.key === "ArrowUp" && !event.shiftKey) props.onMove(-1);
    else if (event.key === "ArrowDown" && !event.shiftKey) props.onMove(1);
    else if (event.shiftKey && (key === "d" || event.code === "KeyD") && props.canDuplicate) props.onDuplicate();
    else if (event.shiftKey && (event.key === "Backspace" || event.key === "Delete")) props.onDelete();
    else if (event.shiftKey && (key === "c" || event.code === "KeyC")) props.onCollapse(!cell.collapsed);
    else handled = false;
    if (handled) {
      event.preventDefault();
      event.stopPropagation();
    }
  }

  return (
    <section
      className={clsx(
        "hn-cell group relative min-w-0 rounded border bg-surface",
        generated ? "border-line border-l-4 border-l-action/50" : "border-line",
        stale && "hn-stale",
        props.dropSide === "before" && "hn-drop-before",
        props.dropSide === "after" && "hn-drop-after",
      )}
      aria-label={`${title}, cell ${index + 1} of ${count}`}
      data-cell-id={cell.id}
      data-kind={cell.kind}
      data-dragging={props.dragging ? "true" : undefined}
      data-testid={`cell-${cell.id}`}
      onKeyDown={onKeyDown}
      onDragOver={props.onDragOver}
      onDrop={props.onDrop}
    >
      <header className="flex items-center gap-2 border-b border-line/70 px-2 py-1.5">
        {!readOnly && (
          <span
            className="cursor-grab select-none px-1 text-muted hover:text-ink"
            draggable
            onDragStart={props.onDragStart}
            onDragEnd={props.onDragEnd}
            title="Drag to reorder (or Alt+↑/↓)"
            aria-hidden="true"
            data-testid="drag-handle"
          >
            ⠿
          </span>
        )}
        <button
          type="button"
          className="rounded px-1 text-muted hover:bg-sunken hover:text-ink"
          aria-expanded={!cell.collapsed}
          aria-controls={bodyId}
          aria-label={cell.collapsed ? `Expand ${title}` : `Collapse ${title}`}
          onClick={() => props.onCollapse(!cell.collapsed)}
        >
          {cell.collapsed ? "▸" : "▾"}
        </button>
        <span
          className={clsx(
            "inline-flex min-w-7 justify-center rounded px-1.5 py-0.5 font-mono text-[11px] leading-none",
            generated ? "bg-action-soft text-action" : "bg-sunken text-muted",
          )}
          title={CELL_LABELS[cell.kind]}
        >
          {KIND_MARKS[cell.kind]}
        </span>
        <h3 className="min-w-0 flex-1 truncate text-sm font-medium text-ink">{title}</h3>
        {props.busy && (
          <span className="animate-pulse rounded bg-action-soft px-1.5 py-0.5 text-[11px] font-medium text-action" role="status" data-testid="busy-marker">
            evaluating…
          </span>
        )}
        {stale && (
          <span className="rounded border border-seal/60 bg-seal-soft px-1.5 py-0.5 text-[11px] font-medium text-seal" data-testid="stale-marker">
            stale
          </span>
        )}
        <CellCommentCount cellId={cell.id} />
        {props.actions}
        {!readOnly && (
          <CellMenu
            title={title}
            index={index}
            count={count}
            canDuplicate={props.canDuplicate}
            onMove={props.onMove}
            onDuplicate={props.onDuplicate}
            onDelete={props.onDelete}
          />
        )}
      </header>
      <div id={bodyId} hidden={cell.collapsed} className="min-w-0 p-3">
        {cell.collapsed ? null : props.children}
      </div>
    </section>
  );
}

function CellMenu({
  title,
  index,
  count,
  canDuplicate,
  onMove,
  onDuplicate,
  onDelete,
}: Pick<CellFrameProps, "index" | "count" | "canDuplicate" | "onMove" | "onDuplicate" | "onDelete"> & { title: string }) {
  const [open, setOpen] = useState(false);
  const menuId = useId();
  const buttonRef = useRef<HTMLButtonElement>(null);
  const menuRef = useRef<HTMLUListElement>(null);

  useEffect(() => {
    if (!open) return;
    menuRef.current?.querySelector<HTMLButtonElement>("button:not(:disabled)")?.focus();
    const close = (event: MouseEvent) => {
      if (!menuRef.current?.contains(event.target as Node) && event.target !== buttonRef.current) setOpen(false);
    };
    document.addEventListener("mousedown", close);
    return () => document.removeEventListener("mousedown", close);
  }, [open]);

  const items: { label: string; keys: string; disabled: boolean; run: () => void; danger?: boolean }[] = [
    { label: "Move up", keys: "Alt+↑", disabled: index === 0, run: () => onMove(-1) },
    { label: "Move down", keys: "Alt+↓", disabled: index === count - 1, run: () => onMove(1) },
    { label: "Duplicate", keys: "Alt+Shift+D", disabled: !canDuplicate, run: onDuplicate },
    { label: "Delete", keys: "Alt+Shift+⌫", disabled: false, run: onDelete, danger: true },
  ];

  function onMenuKeyDown(event: KeyboardEvent<HTMLUListElement>) {
    const buttons = [...(menuRef.current?.querySelectorAll<HTMLButtonElement>("button:not(:disabled)") ?? [])];
    const at = buttons.indexOf(document.activeElement as HTMLButtonElement);
    if (event.key === "Escape") {
      setOpen(false);
      buttonRef.current?.focus();
    } else if (event.key === "ArrowDown") buttons[(at + 1) % buttons.length]?.focus();
    else if (event.key === "ArrowUp") buttons[(at - 1 + buttons.length) % buttons.length]?.focus();
    else return;
    event.preventDefault();
    event.stopPropagation();
  }

  return (
    <div className="relative">
      <button
        ref={buttonRef}
        type="button"
        className="rounded px-1.5 text-muted hover:bg-sunken hover:text-ink"
        aria-haspopup="menu"
        aria-expanded={open}
        aria-controls={open ? menuId : undefined}
        aria-label={`Actions for ${title}`}
        onClick={() => setOpen((value) => !value)}
      >
        ⋯
      </button>
      {open && (
        <ul
          ref={menuRef}
          id={menuId}
          role="menu"
          aria-label={`Actions for ${title}`}
          className="absolute right-0 z-20 mt-1 w-52 rounded border border-line bg-surface py-1 text-sm shadow-md"
          onKeyDown={onMenuKeyDown}
        >
          {items.map((item) => (
            <li key={item.label} role="none">
              <button
                type="button"
                role="menuitem"
                disabled={item.disabled}
                className={clsx(
                  "flex w-full items-center justify-between px-3 py-1.5 text-left hover:bg-sunken disabled:opacity-40",
                  item.danger ? "text-danger" : "text-ink",
                )}
                onClick={() => {
                  setOpen(false);
                  item.run();
                }}
              >
                <span>{item.label}</span>
                <kbd>{item.keys}</kbd>
              </button>
            </li>
          ))}
        </ul>
      )}
    </div>
  );
}
