"use client";

/**
 * The derivation notebook: every cell of a document, add-cell controls,
 * reordering by keyboard (Alt+↑/↓) and by dragging, and the evaluator's
 * results and diagnostics placed where they belong.
 *
 * Every edit is a `DocumentOperation`; the notebook applies it to the document
 * it was given and reports both (`onChange(next, op)`), so the page can save
 * the document and a collaborative transport can forward the operation.
 */
import "katex/dist/katex.min.css";
import "./notebook.css";
import clsx from "clsx";
import { Fragment, useEffect, useLayoutEffect, useMemo, useRef, useState, type DragEvent, type ReactNode } from "react";
import type { Model } from "@/lib/mechanics/browser";
import {
  CELL_KINDS,
  CELL_LABELS,
  DocumentError,
  applyOperation,
  canAddCell,
  createCell,
  createId,
  documentSymbols,
  isGeneratedCell,
  rowCount,
  type Cell,
  type CellKind,
  type DerivationDocument,
  type DocumentOperation,
  type DocumentSymbols,
} from "@/lib/notebook/document";
import { duplicateNames } from "@/lib/notebook/field-checks";
import { diagnosticLine, locateDiagnostics, type LocatedDiagnostic, type ModelDiagnostic, type NotebookResults } from "@/lib/notebook/results";
import { personalCell, VIEW_CHOICE_KEYS, type ViewPreferences } from "@/lib/notebook/view-preferences";
import { CellFrame } from "./cell-frame";
import { EnergyCellEditor, ForcesCellEditor } from "./expression-cell";
import { CodeExportCellView, ConservedCellView, EquationsCellView, LinearizationCellView, SimulationCellView } from "./generated-cells";
import { NoteCellEditor } from "./note-cell";
import { StudyCellView } from "./study/study-cell";
import { TableCellEditor } from "./table-cell";
import type { ViewChoicePatch } from "./use-view-preferences";
import { resultsForCell, type ViewResults } from "./use-view-results";

/**
 * This person's own view of the notebook: their choices laid over the
 * document's settings, the results those choices need, and where a new choice
 * goes. Choosing never changes the document.
 */
export interface NotebookView {
  preferences: ViewPreferences;
  results: ViewResults;
  choose: (cellId: string, patch: ViewChoicePatch) => void;
  /** Simulation settings of a person who may not edit (`undefined` goes back to the document's). */
  changeSimulation: (cellId: string, patch: Record<string, unknown> | undefined) => void;
}

export interface NotebookProps {
  document: DerivationDocument;
  onChange: (document: DerivationDocument, operation: DocumentOperation) => void;
  /** The last good results; kept on screen while a newer evaluation runs or after one fails. */
  results?: NotebookResults | null;
  /** `results` belong to an older version of the document, or the last evaluation failed. */
  stale?: boolean;
  evaluating?: boolean;
  /** The evaluator's diagnostics (ModelError JSON), placed on their cells. */
  diagnostics?: readonly ModelDiagnostic[];
  /** The model those diagnostics were computed for; an expression's diagnostics hide once its text differs. */
  evaluatedModel?: Model;
  readOnly?: boolean;
  /** A term to highlight in the equations (e.g. from a comment). */
  activeTerm?: string | null;
  onTermFocus?: (termId: string | null) => void;
  onTermSelect?: (termId: string) => void;
  /** Id factory for new cells and rows (tests pass a deterministic one). */
  newId?: () => string;
  /** The stored derivation's id: simulation cells use it for server runs and measured data. */
  derivationId?: string;
  /**
   * This person's view choices (equation form, equilibrium, code language, and
   * simulation settings when they may not edit). Without it, a choice changes
   * the document's setting.
   */
  view?: NotebookView;
  /** May store simulation runs on the server (defaults to being able to edit). */
  canStoreRuns?: boolean;
}

const EMPTY_DIAGNOSTICS: readonly LocatedDiagnostic[] = [];

/** Groups for the add-cell picker. */
const ADD_GROUPS: { label: string; kinds: CellKind[] }[] = [
  {
    label: "Model",
    kinds: [
      "coordinates",
      "parameters",
      "inputs",
      "definitions",
      "kinetic",
      "potential",
      "dissipation",
      "forces",
      "constraints",
      "rate-constraints",
      "outputs",
    ],
  },
  { label: "Results", kinds: ["equations", "conserved", "linearization", "code-export", "simulation", "study"] },
  { label: "Text", kinds: ["note"] },
];

export function Notebook(props: NotebookProps) {
  const { document: doc, onChange, results = null, stale = false, evaluating = false, diagnostics = [], evaluatedModel, readOnly = false } = props;
  const newId = props.newId ?? createId;
  const [problem, setProblem] = useState<string | null>(null);
  const [lastDeleted, setLastDeleted] = useState<{ cell: Cell; index: number } | null>(null);
  const [dragId, setDragId] = useState<string | null>(null);
  const [drop, setDrop] = useState<{ id: string; side: "before" | "after" } | null>(null);
  const refocus = useRef<HTMLElement | null>(null);
  const focusCellId = useRef<string | null>(null);

  // Symbols change far less often than the document; keep one object per distinct set so
  // editors are not reconfigured on every keystroke.
  const symbolsKey = JSON.stringify(documentSymbols(doc));
  const symbols = useMemo<DocumentSymbols>(() => JSON.parse(symbolsKey) as DocumentSymbols, [symbolsKey]);
  const duplicates = useMemo(() => new Set(duplicateNames(doc).keys()), [doc]);
  const located = useMemo(() => locateDiagnostics(doc, diagnostics, evaluatedModel), [doc, diagnostics, evaluatedModel]);

  function dispatch(op: DocumentOperation) {
    if (readOnly) return;
    try {
      const next = applyOperation(doc, op);
      setProblem(null);
      onChange(next, op);
    } catch (error) {
      if (error instanceof DocumentError) setProblem(error.message);
      else throw error;
    }
  }

  // Moving a cell can move the focused element in the DOM, which drops focus; put it back.
  useLayoutEffect(() => {
    const element = refocus.current;
    refocus.current = null;
    if (element && element.isConnected && globalThis.document.activeElement !== element) element.focus();
  });

  // A new cell takes the focus: its first field, or else its first control, so typing never
  // lands on the add button the cell was chosen from.
  useEffect(() => {
    const cellId = focusCellId.current;
    if (!cellId) return;
    const section = [...globalThis.document.querySelectorAll<HTMLElement>("[data-cell-id]")].find((element) => element.dataset.cellId === cellId);
    if (!section) return;
    focusCellId.current = null;
    const body = section.querySelector<HTMLElement>(":scope > div");
    const target =
      body?.querySelector<HTMLElement>("input:not([readonly]):not([type=hidden]), textarea:not([readonly]), [role=textbox]:not([aria-readonly=true])") ??
      body?.querySelector<HTMLElement>("button:not(:disabled), select, a[href]") ??
      section.querySelector<HTMLElement>("button");
    target?.focus();
  });

  function move(cellId: string, toIndex: number) {
    refocus.current = globalThis.document.activeElement as HTMLElement | null;
    dispatch({ type: "moveCell", cellId, toIndex });
  }

  function remove(cell: Cell, index: number) {
    dispatch({ type: "deleteCell", cellId: cell.id });
    setLastDeleted({ cell, index });
  }

  function add(kind: CellKind, index: number) {
    const cell = createCell(kind, newId());
    focusCellId.current = cell.id;
    dispatch({ type: "addCell", cell, index });
  }

  function dropOn(event: DragEvent<HTMLElement>, target: Cell) {
    event.preventDefault();
    const sourceId = dragId ?? event.dataTransfer.getData("text/plain");
    setDragId(null);
    setDrop(null);
    if (!sourceId || sourceId === target.id) return;
    const from = doc.cells.findIndex((cell) => cell.id === sourceId);
    if (from < 0) return;
    let to = doc.cells.findIndex((cell) => cell.id === target.id) + (sideOf(event) === "after" ? 1 : 0);
    if (from < to) to -= 1;
    if (to !== from) dispatch({ type: "moveCell", cellId: sourceId, toIndex: to });
  }

  return (
    <div className="flex min-w-0 flex-col gap-3" data-testid="notebook">
      {located.general.length > 0 && (
        <div className="rounded border border-danger/60 bg-danger-soft px-3 py-2 text-sm text-danger" role="alert">
          <p className="font-medium">The evaluator reported:</p>
          <ul className="list-disc pl-5">
            {located.general.map((d, i) => (
              <li key={i}>{diagnosticLine(doc, d)}</li>
            ))}
          </ul>
        </div>
      )}
      {problem && (
        <p className="rounded border border-seal/60 bg-seal-soft px-3 py-1.5 text-sm text-ink" role="status">
          {problem}
        </p>
      )}
      {lastDeleted && !readOnly && (
        <p className="flex items-center gap-3 rounded border border-line bg-surface px-3 py-1.5 text-sm text-ink" role="status">
          Deleted {lastDeleted.cell.title ?? CELL_LABELS[lastDeleted.cell.kind]}.
          <button
            type="button"
            className="text-action underline"
            onClick={() => {
              if (doc.cells.some((cell) => cell.id === lastDeleted.cell.id)) return setLastDeleted(null);
              dispatch({ type: "addCell", cell: lastDeleted.cell, index: lastDeleted.index });
              setLastDeleted(null);
            }}
          >
            Undo
          </button>
          <button type="button" className="ml-auto text-muted" aria-label="Dismiss" onClick={() => setLastDeleted(null)}>
            ×
          </button>
        </p>
      )}
      {doc.cells.length === 0 && <p className="text-sm text-muted">This derivation has no cells. Add one to begin.</p>}
      {doc.cells.map((cell, index) => {
        const view = props.view;
        const shown = view ? personalCell(cell, view.preferences, { ownSimulation: readOnly }) : cell;
        const viewed = view ? resultsForCell(shown, results, view.results) : { results, computing: false, stale: false };
        return (
          <Fragment key={cell.id}>
            <CellFrame
              cell={cell}
              index={index}
              count={doc.cells.length}
              readOnly={readOnly}
              stale={showsResults(cell) && ((stale && results !== null) || viewed.stale)}
              busy={showsResults(cell) && ((evaluating && results !== null) || viewed.computing)}
              canDuplicate={canAddCell(doc, cell.kind)}
              onCollapse={(collapsed) => dispatch({ type: "setCollapsed", cellId: cell.id, collapsed })}
              onDuplicate={() => dispatch({ type: "duplicateCell", cellId: cell.id, newCellId: newId() })}
              onDelete={() => remove(cell, index)}
              onMove={(delta) => {
                const to = index + delta;
                if (to >= 0 && to < doc.cells.length) move(cell.id, to);
              }}
              onDragStart={(event) => {
                event.dataTransfer.setData("text/plain", cell.id);
                event.dataTransfer.effectAllowed = "move";
                setDragId(cell.id);
              }}
              onDragEnd={() => {
                setDragId(null);
                setDrop(null);
              }}
              onDragOver={(event) => {
                if (!dragId && !event.dataTransfer.types.includes("text/plain")) return;
                event.preventDefault();
                event.dataTransfer.dropEffect = "move";
                const side = sideOf(event);
                if (drop?.id !== cell.id || drop.side !== side) setDrop({ id: cell.id, side });
              }}
              onDrop={(event) => dropOn(event, cell)}
              dragging={dragId === cell.id}
              dropSide={drop?.id === cell.id && dragId !== cell.id ? drop.side : null}
            >
              <CellBody
                cell={shown}
                documentCell={cell}
                view={view}
                canStoreRuns={props.canStoreRuns ?? !readOnly}
                symbols={symbols}
                duplicates={duplicates}
                diagnostics={located.byCell.get(cell.id) ?? EMPTY_DIAGNOSTICS}
                results={viewed.results}
                evaluating={evaluating || viewed.computing}
                readOnly={readOnly}
                dispatch={dispatch}
                newId={newId}
                document={doc}
                derivationId={props.derivationId}
                activeTerm={props.activeTerm}
                onTermFocus={props.onTermFocus}
                onTermSelect={props.onTermSelect}
              />
            </CellFrame>
            {!readOnly && index < doc.cells.length - 1 && <AddCellControl doc={doc} index={index + 1} onAdd={add} compact />}
          </Fragment>
        );
      })}
      {!readOnly && <AddCellControl doc={doc} index={doc.cells.length} onAdd={add} />}
    </div>
  );
}

/** Cells showing the evaluation's results, marked stale or busy with it (a study's results come from its own runs). */
function showsResults(cell: Cell): boolean {
  return isGeneratedCell(cell) && cell.kind !== "study";
}

function sideOf(event: DragEvent<HTMLElement>): "before" | "after" {
  const rect = event.currentTarget.getBoundingClientRect();
  return event.clientY < rect.top + rect.height / 2 ? "before" : "after";
}

interface CellBodyProps {
  /** The cell as this person sees it (their view choices laid over the document's settings). */
  cell: Cell;
  /** The cell as the document holds it. */
  documentCell: Cell;
  view?: NotebookView;
  canStoreRuns: boolean;
  symbols: DocumentSymbols;
  duplicates: ReadonlySet<string>;
  diagnostics: readonly LocatedDiagnostic[];
  results: NotebookResults | null;
  evaluating: boolean;
  readOnly: boolean;
  dispatch: (op: DocumentOperation) => void;
  newId: () => string;
  document: DerivationDocument;
  derivationId?: string;
  activeTerm?: string | null;
  onTermFocus?: (termId: string | null) => void;
  onTermSelect?: (termId: string) => void;
}

/**
 * What a generated cell needs for this person's view choice: where the choice
 * goes, the document's setting to compare with, and (for those who may edit)
 * making their choice the document's.
 */
function viewChoiceProps(shown: Cell, documentCell: Cell, view: NotebookView | undefined, readOnly: boolean, dispatch: (op: DocumentOperation) => void) {
  const key = VIEW_CHOICE_KEYS[shown.kind as keyof typeof VIEW_CHOICE_KEYS] as string | undefined;
  if (!view || !key || !("settings" in shown) || !("settings" in documentCell)) return {};
  const value = (shown.settings as Record<string, unknown>)[key];
  const differs = (documentCell.settings as Record<string, unknown>)[key] !== value;
  return {
    documentSettings: documentCell.settings as never,
    onViewChange: (patch: Record<string, unknown>) => view.choose(documentCell.id, patch),
    onMakeDefault:
      readOnly || !differs
        ? undefined
        : () => {
            dispatch({ type: "updateSettings", cellId: documentCell.id, patch: { [key]: value } });
            view.choose(documentCell.id, { [key]: undefined });
          },
  };
}

function CellBody({
  cell,
  documentCell,
  view,
  canStoreRuns,
  symbols,
  duplicates,
  diagnostics,
  results,
  evaluating,
  readOnly,
  dispatch,
  newId,
  document,
  derivationId,
  ...terms
}: CellBodyProps): ReactNode {
  const common = { readOnly, onOperation: dispatch };
  const choice = viewChoiceProps(cell, documentCell, view, readOnly, dispatch);
  switch (cell.kind) {
    case "coordinates":
    case "parameters":
    case "inputs":
    case "definitions":
    case "constraints":
    case "rate-constraints":
    case "outputs":
      return (
        <TableCellEditor
          cell={cell}
          symbols={symbols}
          duplicateNames={duplicates}
          diagnostics={diagnostics}
          newId={newId}
          totalRows={rowCount(document, cell.kind)}
          {...common}
        />
      );
    case "kinetic":
    case "potential":
    case "dissipation":
      return <EnergyCellEditor cell={cell} symbols={symbols} diagnostics={diagnostics} {...common} />;
    case "forces":
      return <ForcesCellEditor cell={cell} symbols={symbols} diagnostics={diagnostics} {...common} />;
    case "note":
      return <NoteCellEditor cell={cell} {...common} />;
    case "equations":
      return <EquationsCellView cell={cell} results={results} evaluating={evaluating} {...terms} {...common} {...choice} />;
    case "conserved":
      return <ConservedCellView cell={cell} results={results} evaluating={evaluating} {...common} />;
    case "linearization":
      return <LinearizationCellView cell={cell} results={results} evaluating={evaluating} inputNames={symbols.inputs} {...common} {...choice} />;
    case "code-export":
      return <CodeExportCellView cell={cell} results={results} evaluating={evaluating} {...common} {...choice} />;
    case "simulation": {
      // Someone who may not edit runs the simulation with settings of their own.
      const own = view && readOnly ? view : null;
      return (
        <SimulationCellView
          cell={cell}
          results={results}
          evaluating={evaluating}
          document={document}
          derivationId={derivationId}
          canStoreRuns={canStoreRuns}
          onSettingsChange={own ? (patch) => own.changeSimulation(cell.id, patch) : undefined}
          onResetSettings={own?.preferences.cells[cell.id]?.simulation ? () => own.changeSimulation(cell.id, undefined) : undefined}
          {...common}
        />
      );
    }
    case "study":
      // The document's settings: a study is the team's, run on the server, never a personal view.
      return (
        <StudyCellView
          cell={documentCell.kind === "study" ? documentCell : cell}
          document={document}
          derivationId={derivationId}
          canRun={canStoreRuns}
          {...common}
        />
      );
  }
}

function AddCellControl({
  doc,
  index,
  onAdd,
  compact = false,
}: {
  doc: DerivationDocument;
  index: number;
  onAdd: (kind: CellKind, index: number) => void;
  compact?: boolean;
}) {
  const [open, setOpen] = useState(false);
  const listRef = useRef<HTMLDivElement>(null);
  useEffect(() => {
    if (open) listRef.current?.querySelector<HTMLButtonElement>("button:not(:disabled)")?.focus();
  }, [open]);
  return (
    <div className={clsx("relative", compact && "-my-2 flex justify-center opacity-0 focus-within:opacity-100 hover:opacity-100")}>
      <button
        type="button"
        className={clsx(
          "rounded text-[13px] text-action",
          compact ? "bg-paper px-2 leading-4 hover:bg-action-soft" : "border border-dashed border-line px-3 py-1.5 hover:border-action",
        )}
        aria-expanded={open}
        aria-label={compact ? `Add cell at position ${index + 1}` : "Add cell"}
        onClick={() => setOpen((value) => !value)}
      >
        + {compact ? "" : "Add cell"}
      </button>
      {open && (
        <div
          ref={listRef}
          role="group"
          aria-label="Cell kinds"
          className="absolute left-0 z-20 mt-1 grid w-72 gap-2 rounded border border-line bg-surface p-2 text-sm shadow-md"
          onKeyDown={(event) => {
            if (event.key === "Escape") setOpen(false);
          }}
        >
          {ADD_GROUPS.map((group) => (
            <div key={group.label}>
              <div className="px-1 text-[11px] uppercase tracking-wide text-muted">{group.label}</div>
              <div className="flex flex-wrap gap-1">
                {group.kinds
                  .filter((kind) => CELL_KINDS.includes(kind))
                  .map((kind) => (
                    <button
                      key={kind}
                      type="button"
                      disabled={!canAddCell(doc, kind)}
                      title={canAddCell(doc, kind) ? undefined : "Already in this derivation"}
                      className="rounded border border-line px-2 py-0.5 text-ink hover:border-action hover:text-action disabled:opacity-40"
                      onClick={() => {
                        setOpen(false);
                        onAdd(kind, index);
                      }}
                    >
                      {CELL_LABELS[kind]}
                    </button>
                  ))}
              </div>
            </div>
          ))}
        </div>
      )}
    </div>
  );
}
