"use client";

/**
 * Kinetic energy, potential energy, dissipation function and generalized
 * forces: expression editors with a live KaTeX rendering underneath.
 */
import { useSharedField, useSharedFields } from "@/components/collab/shared-context";
import type { DocumentOperation, DocumentSymbols, EnergyCell, ForcesCell } from "@/lib/notebook/document";
import { previewLatex, symbolLatex } from "@/lib/notebook/latex-preview";
import { toEditorDiagnostic, type LocatedDiagnostic } from "@/lib/notebook/results";
import { ExpressionEditor } from "./editor/expression-editor";
import { MathView } from "./math";

const ENERGY: Record<EnergyCell["kind"], { symbol: string; latex: string; label: string; placeholder: string }> = {
  kinetic: { symbol: "T", latex: "T", label: "Kinetic energy T", placeholder: "e.g. 1/2*m*x'^2" },
  potential: { symbol: "V", latex: "V", label: "Potential energy V", placeholder: "e.g. m*g*y" },
  dissipation: { symbol: "D", latex: "D", label: "Dissipation function D", placeholder: "e.g. 1/2*c*theta'^2" },
};

/** The rendering under an editor, updated as the analyst types (the engine's LaTeX of the typed tree). */
export function ExpressionPreview({ lhs, expr, testId }: { lhs: string; expr: string; testId?: string }) {
  const body = previewLatex(expr);
  if (body === null) return null;
  return <MathView latex={`${lhs} = ${body}`} display className="mt-1 text-ink" data-testid={testId} />;
}

export interface EnergyCellProps {
  cell: EnergyCell;
  symbols: DocumentSymbols;
  diagnostics?: readonly LocatedDiagnostic[];
  readOnly?: boolean;
  onOperation: (op: DocumentOperation) => void;
}

export function EnergyCellEditor({ cell, symbols, diagnostics = [], readOnly = false, onOperation }: EnergyCellProps) {
  const meta = ENERGY[cell.kind];
  const shared = useSharedField(cell.id, "expr");
  return (
    <div className="min-w-0">
      <div className="flex items-start gap-2">
        <span className="pt-1.5 font-mono text-sm text-muted" aria-hidden="true">
          {meta.symbol} =
        </span>
        <ExpressionEditor
          className="min-w-0 flex-1"
          label={meta.label}
          value={cell.expr}
          onChange={(expr) => onOperation({ type: "setExpression", cellId: cell.id, expr })}
          shared={shared ?? undefined}
          symbols={symbols}
          readOnly={readOnly}
          placeholder={meta.placeholder}
          allowEmpty={cell.kind === "dissipation"}
          diagnostics={diagnostics.map((d) => toEditorDiagnostic(d, cell.expr))}
          diagnosticsFor={diagnostics[0]?.text ?? null}
          data-testid={`editor-${cell.kind}`}
        />
      </div>
      <ExpressionPreview lhs={meta.latex} expr={cell.expr} testId={`preview-${cell.kind}`} />
    </div>
  );
}

export interface ForcesCellProps {
  cell: ForcesCell;
  symbols: DocumentSymbols;
  diagnostics?: readonly LocatedDiagnostic[];
  readOnly?: boolean;
  onOperation: (op: DocumentOperation) => void;
}

/** One generalized force per coordinate; forces whose coordinate is gone are kept and flagged, never dropped. */
export function ForcesCellEditor({ cell, symbols, diagnostics = [], readOnly = false, onOperation }: ForcesCellProps) {
  const textOf = (coordinate: string) => cell.entries.find((entry) => entry.coordinate === coordinate)?.expr ?? "";
  const orphans = cell.entries.filter((entry) => !symbols.coordinates.includes(entry.coordinate));
  return (
    <div className="flex min-w-0 flex-col gap-3">
      {symbols.coordinates.length === 0 && <p className="text-sm text-muted">Add coordinates first; each gets one generalized force.</p>}
      {symbols.coordinates.map((coordinate) => (
        <ForceField
          key={coordinate}
          cell={cell}
          coordinate={coordinate}
          text={textOf(coordinate)}
          symbols={symbols}
          diagnostics={diagnostics.filter((d) => d.location.coordinate === coordinate)}
          readOnly={readOnly}
          onOperation={onOperation}
        />
      ))}
      {orphans.map((entry) => (
        <div key={entry.coordinate} className="flex items-center gap-2 rounded border border-seal/60 bg-seal-soft px-2 py-1 text-sm text-ink" role="status">
          <span className="min-w-0 flex-1">
            Force on <code className="font-mono">{entry.coordinate}</code> (<code className="font-mono">{entry.expr || "blank"}</code>) has no coordinate of
            that name.
          </span>
          {!readOnly && (
            <button
              type="button"
              className="text-danger underline"
              onClick={() => onOperation({ type: "removeForce", cellId: cell.id, coordinate: entry.coordinate })}
            >
              Remove
            </button>
          )}
        </div>
      ))}
    </div>
  );
}

/**
 * The generalized force on one coordinate. In a shared document the entry is
 * created when the field gets the focus, so the editor is bound to the entry's
 * text before the first key is typed.
 */
function ForceField({
  cell,
  coordinate,
  text,
  symbols,
  diagnostics,
  readOnly,
  onOperation,
}: {
  cell: ForcesCell;
  coordinate: string;
  text: string;
  symbols: DocumentSymbols;
  diagnostics: readonly LocatedDiagnostic[];
  readOnly: boolean;
  onOperation: (op: DocumentOperation) => void;
}) {
  const shared = useSharedField(cell.id, ["entries", coordinate, "expr"]);
  const fields = useSharedFields();
  const lhs = `Q_{${symbolLatex(coordinate)}}`;
  return (
    <div className="min-w-0">
      <div className="flex items-start gap-2">
        <span className="w-24 shrink-0 truncate pt-1.5 text-sm text-muted" aria-hidden="true" data-testid={`force-label-${coordinate}`}>
          <span className="italic">Q</span>
          <sub className="font-mono">{coordinate}</sub> =
        </span>
        <ExpressionEditor
          className="min-w-0 flex-1"
          label={`Generalized force on ${coordinate}`}
          value={text}
          onChange={(expr) => onOperation({ type: "setForce", cellId: cell.id, coordinate, expr })}
          shared={shared ?? undefined}
          onFocus={fields && !shared && !readOnly ? () => onOperation({ type: "setForce", cellId: cell.id, coordinate, expr: text }) : undefined}
          symbols={symbols}
          readOnly={readOnly}
          placeholder="blank means no force"
          allowEmpty
          diagnostics={diagnostics.map((d) => toEditorDiagnostic(d, text))}
          diagnosticsFor={diagnostics[0]?.text ?? null}
        />
      </div>
      <ExpressionPreview lhs={lhs} expr={text} />
    </div>
  );
}
