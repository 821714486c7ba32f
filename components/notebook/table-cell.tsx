"use client";

/**
 * Editable grids for coordinates, parameters, inputs and definitions, with
 * instant checks (name, unit syntax, value) and the evaluator's diagnostics
 * placed on the row and column they name.
 */
import clsx from "clsx";
import { useEffect, useId, useRef, type ComponentProps, type InputHTMLAttributes } from "react";
import { ROW_LIMITS, emptyRow, rowLimitText, type AnyRow, type DocumentOperation, type DocumentSymbols, type TableCell } from "@/lib/notebook/document";
import { spellGreekLetters } from "@/lib/mechanics/browser";
import { checkParameterValue, checkSymbolName, checkUnitSyntax, type FieldCheck } from "@/lib/notebook/field-checks";
import { previewLatex, symbolLatex } from "@/lib/notebook/latex-preview";
import { toEditorDiagnostic, type LocatedDiagnostic } from "@/lib/notebook/results";
import { useSharedField, useSharedFields } from "@/components/collab/shared-context";
import { SharedInput } from "@/components/collab/shared-text-input";
import { carryForceOnRename } from "@/components/collab/carry-force";
import { ExpressionEditor } from "./editor/expression-editor";
import { MathView } from "./math";

type Column = "name" | "unit" | "value" | "expr" | "description";

const COLUMNS: Record<TableCell["kind"], Column[]> = {
  coordinates: ["name", "unit", "description"],
  inputs: ["name", "unit", "description"],
  parameters: ["name", "unit", "value", "description"],
  definitions: ["name", "expr", "description"],
  constraints: ["name", "expr", "description"],
  "rate-constraints": ["name", "expr", "description"],
  outputs: ["name", "expr", "unit", "description"],
};

// Below these widths the grid scrolls inside its cell (on a phone) instead of squeezing its fields.
const MIN_WIDTHS: Record<TableCell["kind"], string> = {
  coordinates: "min-w-[30rem]",
  inputs: "min-w-[30rem]",
  parameters: "min-w-[38rem]",
  definitions: "min-w-[36rem]",
  constraints: "min-w-[36rem]",
  "rate-constraints": "min-w-[36rem]",
  outputs: "min-w-[42rem]",
};

const HEADINGS: Record<Column, string> = { name: "Name", unit: "Unit", value: "Value", expr: "Expression", description: "Description" };

const ROW_NOUN: Record<TableCell["kind"], string> = {
  coordinates: "coordinate",
  parameters: "parameter",
  inputs: "input",
  definitions: "definition",
  constraints: "constraint",
  "rate-constraints": "rate constraint",
  outputs: "output",
};

// Hints, not content: worded as examples and drawn in italic sans, unlike the monospace values.
const PLACEHOLDERS: Record<TableCell["kind"], Partial<Record<Column, string>>> = {
  coordinates: { name: "e.g. theta", unit: "e.g. rad" },
  inputs: { name: "e.g. F", unit: "e.g. N" },
  parameters: { name: "e.g. m", unit: "e.g. kg", value: "blank = symbolic" },
  definitions: { name: "e.g. x1", expr: "e.g. l*sin(theta)" },
  constraints: { name: "e.g. rope", expr: "= 0, e.g. x^2 + y^2 - l^2" },
  "rate-constraints": { name: "e.g. roll", expr: "= 0, e.g. x' - r*phi'" },
  outputs: { name: "e.g. tension", expr: "e.g. -2*l*lambda_rope", unit: "e.g. N" },
};

export interface TableCellProps {
  cell: TableCell;
  symbols: DocumentSymbols;
  /** Names used more than once across the derivation. */
  duplicateNames?: ReadonlySet<string>;
  diagnostics?: readonly LocatedDiagnostic[];
  readOnly?: boolean;
  onOperation: (op: DocumentOperation) => void;
  newId: () => string;
  /** Rows of this kind in the whole derivation (several cells may hold them); defaults to this cell's. */
  totalRows?: number;
}

function rowIsBlank(row: AnyRow): boolean {
  return Object.entries(row).every(([key, value]) => key === "id" || String(value).trim() === "");
}

function localCheck(column: Column, text: string, duplicate: boolean): FieldCheck {
  if (column === "name") {
    const check = checkSymbolName(text);
    if (!check.ok) return check;
    return duplicate ? { ok: false, message: `"${text.trim()}" is used more than once`, position: 0 } : check;
  }
  if (column === "unit") return checkUnitSyntax(text);
  if (column === "value") return checkParameterValue(text);
  return { ok: true };
}

export function TableCellEditor({ cell, symbols, duplicateNames, diagnostics = [], readOnly = false, onOperation, newId, totalRows }: TableCellProps) {
  const columns = COLUMNS[cell.kind];
  const noun = ROW_NOUN[cell.kind];
  const baseId = useId();
  const rows = cell.rows as AnyRow[];

  // "+ Add …" moves the focus into the new row's first field, so typing goes there
  // and not to the button (where single-key shortcuts used to catch it).
  const focusRowId = useRef<string | null>(null);
  const tableRef = useRef<HTMLTableElement>(null);
  useEffect(() => {
    const rowId = focusRowId.current;
    if (!rowId) return;
    const row = [...(tableRef.current?.querySelectorAll<HTMLElement>("tr[data-row-id]") ?? [])].find((tr) => tr.dataset.rowId === rowId);
    const field = row?.querySelector<HTMLElement>("input, [role=textbox]");
    if (!field) return;
    focusRowId.current = null;
    field.focus();
  });

  function addRow() {
    const id = newId();
    onOperation({ type: "addRow", cellId: cell.id, row: emptyRow(cell.kind, id) });
    focusRowId.current = id;
  }
  const limit = ROW_LIMITS[cell.kind];
  const full = (totalRows ?? rows.length) >= limit;

  const update = (rowId: string, column: Column, value: string) => onOperation({ type: "updateRow", cellId: cell.id, rowId, patch: { [column]: value } });

  return (
    <div className="min-w-0">
      <div className="overflow-x-auto">
        <table ref={tableRef} className={clsx("w-full border-collapse text-sm", MIN_WIDTHS[cell.kind])}>
          <thead>
            <tr className="text-left text-xs uppercase tracking-wide text-muted">
              {columns.map((column) => (
                <th key={column} scope="col" className={clsx("px-1 pb-1 font-medium", column === "description" && "w-1/3", column === "expr" && "w-2/5")}>
                  {HEADINGS[column]}
                </th>
              ))}
              {!readOnly && <th className="w-8" aria-label="Row actions" />}
            </tr>
          </thead>
          <tbody>
            {rows.map((row, rowIndex) => {
              const blank = rowIsBlank(row);
              const rowDiagnostics = diagnostics.filter((d) => d.location.rowId === row.id);
              return (
                <tr key={row.id} className="align-top" data-row-id={row.id}>
                  {columns.map((column) => {
                    const value = String((row as unknown as Record<string, string>)[column] ?? "");
                    const label = `${HEADINGS[column]}, ${noun} ${rowIndex + 1}`;
                    const fieldId = `${baseId}-${row.id}-${column}`;
                    const local = blank
                      ? ({ ok: true } as const)
                      : localCheck(column, value, column === "name" && (duplicateNames?.has(value.trim()) ?? false));
                    const server = rowDiagnostics.filter((d) => d.location.column === column || (column === "name" && d.location.column === undefined));
                    const messages = [...(local.ok ? [] : [local.message]), ...server.map((d) => d.diagnostic.message)];
                    if (column === "expr") {
                      return (
                        <td key={column} className="px-1 py-1">
                          <DefinitionExpression
                            cellId={cell.id}
                            rowId={row.id}
                            label={`Expression of ${row.name.trim() || `${noun} ${rowIndex + 1}`}`}
                            value={value}
                            onChange={(next) => update(row.id, "expr", next)}
                            symbols={symbols}
                            readOnly={readOnly}
                            placeholder={PLACEHOLDERS[cell.kind].expr}
                            diagnostics={server.map((d) => toEditorDiagnostic(d, value))}
                            diagnosticsFor={server[0]?.text ?? null}
                            allowEmpty={blank}
                          />
                          {cell.kind === "constraints" || cell.kind === "rate-constraints" ? (
                            <ConstraintPreview expr={value} />
                          ) : (
                            <DefinitionPreview name={row.name} expr={value} />
                          )}
                        </td>
                      );
                    }
                    return (
                      <td key={column} className="px-1 py-1">
                        <TableField
                          cellId={cell.id}
                          rowId={row.id}
                          column={column}
                          renamesCoordinate={cell.kind === "coordinates" && column === "name"}
                          id={fieldId}
                          className={clsx(
                            "w-full rounded border bg-paper px-2 py-1 text-ink outline-none focus:border-action placeholder:font-sans placeholder:text-[13px] placeholder:italic placeholder:text-muted/70",
                            column !== "description" && "font-mono",
                            messages.length > 0 ? "border-danger" : "border-line",
                          )}
                          aria-label={label}
                          aria-invalid={messages.length > 0 || undefined}
                          aria-describedby={messages.length > 0 ? `${fieldId}-error` : undefined}
                          value={value}
                          placeholder={PLACEHOLDERS[cell.kind][column]}
                          readOnly={readOnly}
                          spellCheck={column === "description"}
                          autoComplete="off"
                          inputMode={column === "value" ? "decimal" : undefined}
                          onValue={(text) => update(row.id, column, column === "name" ? spellGreekLetters(text) : text)}
                        />
                        {messages.length > 0 && (
                          <p id={`${fieldId}-error`} className="mt-0.5 text-xs text-danger" role="status">
                            {messages.join("; ")}
                          </p>
                        )}
                      </td>
                    );
                  })}
                  {!readOnly && (
                    <td className="px-1 py-1 text-right">
                      <button
                        type="button"
                        className="rounded px-1.5 py-1 text-muted hover:bg-danger-soft hover:text-danger"
                        aria-label={`Remove ${noun} ${row.name.trim() || rowIndex + 1}`}
                        onClick={() => onOperation({ type: "deleteRow", cellId: cell.id, rowId: row.id })}
                      >
                        ×
                      </button>
                    </td>
                  )}
                </tr>
              );
            })}
          </tbody>
        </table>
      </div>
      {rows.length === 0 && <p className="px-1 py-2 text-sm text-muted">No {noun}s yet.</p>}
      {!readOnly && (
        <div className="mt-2 flex flex-wrap items-center gap-x-3 gap-y-1">
          <button
            type="button"
            className="rounded border border-dashed border-line px-2.5 py-1 text-[13px] text-action hover:border-action disabled:cursor-not-allowed disabled:text-muted disabled:hover:border-line"
            onClick={addRow}
            disabled={full}
            aria-describedby={`${baseId}-limit`}
          >
            + Add {noun}
          </button>
          <span id={`${baseId}-limit`} className={clsx("text-xs", full ? "text-ink" : "text-muted")} data-testid="row-limit">
            {full ? `${rowLimitText(cell.kind)} Remove one to add another.` : `${totalRows ?? rows.length} of at most ${limit}`}
          </span>
        </div>
      )}
    </div>
  );
}

/** Live rendering of `name = expr` under a definition, from the engine's LaTeX. */
function DefinitionPreview({ name, expr }: { name: string; expr: string }) {
  const body = previewLatex(expr);
  if (!body || checkSymbolName(name).ok === false) return null;
  return <MathView latex={`${symbolLatex(name.trim())} = ${body}`} display className="text-sm text-ink" />;
}

/** Live rendering of `expr = 0` under a constraint. */
function ConstraintPreview({ expr }: { expr: string }) {
  const body = previewLatex(expr);
  if (!body) return null;
  return <MathView latex={`${body} = 0`} display className="text-sm text-ink" />;
}

type FieldProps = Omit<InputHTMLAttributes<HTMLInputElement>, "onChange"> & { value: string };

/**
 * One text field of a row: bound to its Y.Text in a shared document (typing
 * merges with everyone else's), a controlled input otherwise. A name field
 * reads a typed Greek letter as its name, and renaming a coordinate carries its
 * generalized force along, as the document operation does.
 */
function TableField({
  cellId,
  rowId,
  column,
  renamesCoordinate,
  onValue,
  ...input
}: FieldProps & { cellId: string; rowId: string; column: Column; renamesCoordinate: boolean; onValue: (text: string) => void }) {
  const shared = useSharedField(cellId, ["rows", rowId, column]);
  const fields = useSharedFields();
  if (shared && fields) {
    const { value: _value, ...rest } = input;
    return (
      <SharedInput
        {...rest}
        text={shared.text}
        origin={shared.origin}
        transformInsert={column === "name" ? spellGreekLetters : undefined}
        onEdit={renamesCoordinate ? (before, after) => carryForceOnRename(fields.ydoc, before, after) : undefined}
      />
    );
  }
  return <input {...input} onChange={(event) => onValue(event.target.value)} />;
}

/** A definition's expression: the expression editor, bound to the row's Y.Text in a shared document. */
function DefinitionExpression({ cellId, rowId, ...props }: ComponentProps<typeof ExpressionEditor> & { cellId: string; rowId: string }) {
  const shared = useSharedField(cellId, ["rows", rowId, "expr"]);
  return <ExpressionEditor {...props} shared={shared ?? undefined} />;
}
