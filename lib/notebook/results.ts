/**
 * What the notebook shows from an evaluation, and how the evaluator's
 * diagnostics reach the cells. The evaluate API fills `NotebookResults`
 * (LaTeX comes from the engine, with each top-level term wrapped in
 * `\htmlData{term=ID}{…}`); the notebook only renders it.
 */
import type { Model } from "../mechanics/browser";
import { CELL_LABELS, locateModelField, type DerivationDocument, type FieldLocation } from "./document";

export interface EquationView {
  coordinate: string;
  /** Residual in the input syntax. */
  residual: string;
  /** LaTeX of `residual = 0`, terms wrapped in \htmlData{term=ID}. */
  latex: string;
  /** The equation's top-level terms with those ids (comments anchor to them); absent in results stored before they were kept. */
  terms?: { id: string; text: string; latex: string }[];
}

export interface NotebookResults {
  equations: EquationView[];
  /** LaTeX of M(q) q'' = f(q, q', t, u). */
  massMatrixLatex?: string;
  /** Accelerations solved, where the system is small enough; absent otherwise. */
  accelerations?: { coordinate: string; latex: string }[];
  /** Why accelerations are not shown (e.g. the system is too large to invert symbolically). */
  accelerationsNote?: string;
  energyLatex?: string;
  conserved?: { name: string; latex: string; reason: string }[];
  /** Why the energy function is not conserved (explicit time, dissipation, applied forces); absent when it is. */
  energyNotConserved?: string;
  /**
   * Each cyclic coordinate (L does not depend on it) with its momentum and the
   * momentum balance dp/dt = Q − ∂D/∂q' as one LaTeX line, and what acts on it;
   * `conserved` when nothing does.
   */
  cyclicMomenta?: { coordinate: string; conserved: boolean; rateLatex: string; actedOnBy: string[] }[];
  linearization?: {
    equilibria: { label: string; values: Record<string, number> }[];
    /** For the equilibrium the linearization cell chose. */
    selected?: {
      index: number;
      stateNames: string[];
      inputNames: string[];
      A: number[][];
      B: number[][];
      /** Every mode of K v = ω² M v, by ω²: oscillating, rigid (ω = 0) and divergent (ω² < 0) ones. */
      modes: ModeView[];
      /**
       * The coordinates a mode shape lists, in order: every coordinate of the
       * model (with constraints the state holds only the independent ones).
       * Absent in results stored before constraints were linearized: the
       * state's coordinates then.
       */
      shapeCoordinates?: string[];
      /**
       * With constraints: which coordinates the state holds, the others
       * following from the constraints, and each multiplier at the equilibrium.
       */
      constrained?: { independent: string[]; dependent: string[]; multipliers: { symbol: string; value: number }[] };
      /** Eigenvalues of A, rounding noise below the stability tolerance written as 0. */
      eigenvalues: { re: number; im: number }[];
      /** The verdict of the one stability rule (lib/mechanics/stability.ts), as the equilibrium list shows it. */
      stability: "stable" | "marginal" | "unstable";
      /** The clause of the rule that decided, in words. */
      stabilityReason: string;
      /**
       * Rows of C and D (y = C x + D u) for every output the frequency response
       * may use: each coordinate, each rate, and each model output that reads
       * without multipliers; `notes` say why any output is left out.
       */
      outputs?: { names: string[]; units: string[]; C: number[][]; D: number[][]; notes: string[] };
    };
  };
  code?: { language: string; filename: string; source: string }[];
  timingMs?: number;
}

/** One mode of the linearization, as the notebook shows it. */
export interface ModeView {
  kind: "oscillating" | "rigid" | "divergent";
  /** Undamped natural frequency; 0 for a rigid mode, null for a divergent one. */
  hertz: number | null;
  /** √(−ω²) in 1/s for a divergent mode (the undamped motion grows like exp(rate·t)), else null. */
  growthRate: number | null;
  /** Over the coordinates, largest entry +1. */
  shape: number[];
  /**
   * The mode's eigenvalue of A (Im λ > 0) once damping is included, when it has
   * an oscillating one: damped frequency Im λ/2π, damping ratio ζ = −Re λ/|λ|.
   */
  eigenvalue: { re: number; im: number } | null;
}

/** A problem the evaluator found, as `ModelError.toJSON()` gives it. */
export interface ModelDiagnostic {
  code: string;
  field: string;
  /** 1-based column in that field's text, or null when the whole field is meant. */
  column: number | null;
  length: number;
  message: string;
}

export interface LocatedDiagnostic {
  location: FieldLocation;
  diagnostic: ModelDiagnostic;
  /** The text the evaluator saw in that field, when the evaluated model is known. */
  text: string | null;
}

function fieldText(model: Model | undefined, field: string): string | null {
  if (!model) return null;
  if (field === "kinetic" || field === "potential" || field === "dissipation") return model[field] ?? null;
  const row = /^(definitions|constraints|rateConstraints|outputs)\[(\d+)\]\.expr$/.exec(field);
  if (row) {
    const list = model[row[1] as "definitions" | "constraints" | "rateConstraints" | "outputs"];
    return list?.[Number(row[2])]?.expr ?? null;
  }
  const force = /^forces(?:\.([A-Za-z_]\w*)|\[["']?([A-Za-z_]\w*)["']?\])$/.exec(field);
  if (force) return model.forces?.[force[1] ?? force[2]!] ?? null;
  return null;
}

/**
 * Groups diagnostics by the cell they belong to. Diagnostics with no place in
 * the document (the title, a whole-model limit) are returned under `general`.
 */
export function locateDiagnostics(
  doc: DerivationDocument,
  diagnostics: readonly ModelDiagnostic[],
  evaluatedModel?: Model,
): { byCell: Map<string, LocatedDiagnostic[]>; general: ModelDiagnostic[] } {
  const byCell = new Map<string, LocatedDiagnostic[]>();
  const general: ModelDiagnostic[] = [];
  for (const diagnostic of diagnostics) {
    const location = locateModelField(doc, diagnostic.field);
    if (!location) {
      general.push(diagnostic);
      continue;
    }
    const list = byCell.get(location.cellId) ?? [];
    list.push({ location, diagnostic, text: fieldText(evaluatedModel, diagnostic.field) });
    byCell.set(location.cellId, list);
  }
  return { byCell, general };
}

/**
 * The character range an expression editor underlines for a diagnostic:
 * the reported column and length, or the whole text when no column is given.
 */
export function toEditorDiagnostic(located: LocatedDiagnostic, currentText: string): { from: number; to: number; message: string; source: string } {
  const { column, length, message, code } = located.diagnostic;
  const text = located.text ?? currentText;
  if (column === null) return { from: 0, to: text.length, message, source: code };
  return { from: column - 1, to: column - 1 + Math.max(1, length), message, source: code };
}

const COLUMN_HEADINGS: Record<string, string> = { name: "Name", unit: "Unit", value: "Value", expr: "Expression", description: "Description" };
const ROW_NOUNS: Record<string, string> = {
  coordinates: "coordinate",
  parameters: "parameter",
  inputs: "input",
  definitions: "definition",
  constraints: "constraint",
  "rate-constraints": "rate constraint",
  outputs: "output",
};

/**
 * The label the analyst sees for a model field: `kinetic` → "Kinetic energy",
 * `parameters[1].unit` → "Unit, parameter 2 (g)", `definitions[0].expr` →
 * "Expression of x1", `forces.theta` → "Generalized force on theta". Row
 * numbers count the rows as the grid shows them, blank ones included.
 */
export function fieldLabel(doc: DerivationDocument, field: string): string {
  if (field === "" || field === "model") return "The model";
  if (field === "title") return "Title";
  const location = locateModelField(doc, field);
  const cell = location ? doc.cells.find((c) => c.id === location.cellId) : undefined;
  if (!location || !cell) return field;
  if (location.coordinate) return `Generalized force on ${location.coordinate}`;
  if (!location.rowId || !("rows" in cell)) return cell.title ?? CELL_LABELS[cell.kind];
  const rows = cell.rows as { id: string; name: string }[];
  const index = rows.findIndex((row) => row.id === location.rowId);
  const row = rows[index];
  const name = row?.name.trim() ?? "";
  if (location.column === "expr" && name !== "") return `Expression of ${name}`;
  const where = `${ROW_NOUNS[cell.kind] ?? "row"} ${index + 1}${name !== "" && location.column !== "name" ? ` (${name})` : ""}`;
  const heading = location.column ? COLUMN_HEADINGS[location.column] : undefined;
  return heading ? `${heading}, ${where}` : where.charAt(0).toUpperCase() + where.slice(1);
}

/** One line for a diagnostic, in the analyst's labels: `Kinetic energy, column 12: unknown symbol "l3"`. */
export function diagnosticLine(doc: DerivationDocument, diagnostic: Pick<ModelDiagnostic, "field" | "column" | "message">): string {
  const label = fieldLabel(doc, diagnostic.field);
  return `${label}${diagnostic.column !== null ? `, column ${diagnostic.column}` : ""}: ${diagnostic.message}`;
}
