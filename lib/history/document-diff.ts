import { CELL_LABELS, isBlankRow, type Cell, type CellKind, type DerivationDocument, type ParameterRow } from "@/lib/notebook/document";
import { diffCounts, textDiff, type DiffLine } from "./text-diff";

/**
 * What changed between two revisions' documents, for the comparison page:
 * every cell as text (source cells as the analyst typed them, generated cells
 * as their settings) diffed line by line, and the parameters as a table.
 * Pure and client-safe; the equations are compared by `term-diff.ts`.
 */

export type ChangeStatus = "added" | "removed" | "changed" | "unchanged";

export interface CellChange {
  /** The cell's id (stable across revisions of the same document). */
  id: string;
  kind: CellKind;
  /** The cell's own title, or its kind's label. */
  label: string;
  status: ChangeStatus;
  lines: DiffLine[];
  added: number;
  removed: number;
}

export interface ParameterChange {
  status: ChangeStatus;
  before: ParameterRow | null;
  after: ParameterRow | null;
  /** Columns whose text differs (for a changed row). */
  fields: ("name" | "unit" | "value" | "description")[];
}

export interface DocumentComparison {
  title: { before: string; after: string; changed: boolean };
  cells: CellChange[];
  parameters: ParameterChange[];
  /** Cells present in both whose order changed. */
  moved: boolean;
  /** True when nothing a reader sees differs (a collapsed cell, say, still changes the content hash). */
  sameText: boolean;
}

function described(line: string, description: string): string {
  return description.trim() ? `${line} — ${description.trim()}` : line;
}

function settingLines(cell: Cell): string[] {
  switch (cell.kind) {
    case "equations":
      return [`form: ${cell.settings.form}`];
    case "linearization":
      return [
        `equilibrium: ${cell.settings.equilibriumIndex + 1}`,
        ...Object.entries(cell.settings.inputValues)
          .sort(([a], [b]) => a.localeCompare(b))
          .map(([name, value]) => `input ${name}: ${value}`),
      ];
    case "code-export":
      return [`language: ${cell.settings.language}`];
    case "simulation": {
      const s = cell.settings;
      const sorted = (record: Record<string, string>) => Object.entries(record).sort(([a], [b]) => a.localeCompare(b));
      return [
        `start time: ${s.startTime}`,
        `end time: ${s.endTime}`,
        `output step: ${s.outputStep}`,
        `tolerance: ${s.tolerance}`,
        ...sorted(s.initialCoordinates).map(([name, value]) => `initial ${name}: ${value}`),
        ...sorted(s.initialRates).map(([name, value]) => `initial ${name}': ${value}`),
        ...sorted(s.inputs).map(([name, expr]) => `input ${name}(t) = ${expr}`),
        ...sorted(s.parameterOverrides).map(([name, value]) => `parameter ${name} for this simulation: ${value}`),
        ...s.points.map((point) => `point: (${point.x}, ${point.y})`),
      ];
    }
    case "study": {
      const s = cell.settings;
      const sorted = (record: Record<string, string>) => Object.entries(record).sort(([a], [b]) => a.localeCompare(b));
      return [
        `mode: ${s.mode}`,
        ...(s.mode === "tolerance" ? [`samples: ${s.samples}`, `seed: ${s.seed}`] : []),
        ...s.parameters.map((p) =>
          s.mode === "grid"
            ? `vary ${p.name}: ${p.values}`
            : p.distribution === "normal"
              ? `vary ${p.name}: normal, mean ${p.mean}, sd ${p.sd}, within ${p.min} … ${p.max}`
              : `vary ${p.name}: uniform ${p.min} … ${p.max}`,
        ),
        ...s.cases.flatMap((c) => [
          `case ${c.name}`,
          ...sorted(c.initialCoordinates).map(([name, value]) => `  initial ${name}: ${value}`),
          ...sorted(c.initialRates).map(([name, value]) => `  initial ${name}': ${value}`),
          ...sorted(c.inputs).map(([name, expr]) => `  input ${name}(t) = ${expr}`),
        ]),
        `start time: ${s.startTime}`,
        `end time: ${s.endTime}`,
        `output step: ${s.outputStep}`,
        `tolerance: ${s.tolerance}`,
        `watch: ${s.watch.join(", ")}`,
      ];
    }
    case "conserved":
      return [];
    default:
      return [];
  }
}

/** A cell as the text a reviewer compares: rows one per line, expressions as typed, settings as `name: value`. */
export function cellText(cell: Cell): string {
  const lines: string[] = [];
  if (cell.title?.trim()) lines.push(`# ${cell.title.trim()}`);
  switch (cell.kind) {
    case "coordinates":
    case "inputs":
      for (const row of cell.rows) if (!isBlankRow(row)) lines.push(described(`${row.name} [${row.unit}]`, row.description));
      break;
    case "parameters":
      for (const row of cell.rows)
        if (!isBlankRow(row)) lines.push(described(`${row.name} = ${row.value.trim() || "(symbolic)"} [${row.unit}]`, row.description));
      break;
    case "definitions":
      for (const row of cell.rows) if (!isBlankRow(row)) lines.push(described(`${row.name} = ${row.expr}`, row.description));
      break;
    case "kinetic":
    case "potential":
    case "dissipation":
      if (cell.expr.trim()) lines.push(cell.expr);
      break;
    case "forces":
      for (const entry of cell.entries) if (entry.expr.trim()) lines.push(`Q_${entry.coordinate} = ${entry.expr}`);
      break;
    case "note":
      lines.push(...cell.markdown.split("\n"));
      break;
    default:
      lines.push(...settingLines(cell));
  }
  return lines.join("\n");
}

function cellLabel(cell: Cell): string {
  return cell.title?.trim() || CELL_LABELS[cell.kind];
}

function cellChange(before: Cell | undefined, after: Cell | undefined): CellChange {
  const cell = (after ?? before)!;
  const oldText = before ? cellText(before) : "";
  const newText = after ? cellText(after) : "";
  // An empty cell added or removed has no lines to show.
  const lines = oldText === "" && newText === "" ? [] : textDiff(oldText, newText);
  const counts = diffCounts(lines);
  const status: ChangeStatus = !before ? "added" : !after ? "removed" : counts.added + counts.removed > 0 ? "changed" : "unchanged";
  return { id: cell.id, kind: cell.kind, label: cellLabel(cell), status, lines, ...counts };
}

function parameterRows(doc: DerivationDocument): ParameterRow[] {
  return doc.cells.flatMap((cell) => (cell.kind === "parameters" ? cell.rows.filter((row) => !isBlankRow(row)) : []));
}

const PARAMETER_FIELDS = ["name", "unit", "value", "description"] as const;

/**
 * Parameters of both revisions side by side: rows are matched by name, then
 * by row id (so a renamed parameter is one changed row).
 */
export function compareParameters(before: DerivationDocument, after: DerivationDocument): ParameterChange[] {
  const oldRows = parameterRows(before);
  const newRows = parameterRows(after);
  const unmatched = new Set(oldRows);
  const take = (match: ParameterRow | undefined) => {
    if (match) unmatched.delete(match);
    return match ?? null;
  };
  const byName = newRows.map((row) => take(oldRows.find((old) => unmatched.has(old) && old.name.trim() === row.name.trim())));
  const pairs: [ParameterRow | null, ParameterRow][] = newRows.map((row, i) => [
    byName[i] ?? take(oldRows.find((old) => unmatched.has(old) && old.id === row.id)),
    row,
  ]);
  const changes: ParameterChange[] = pairs.map(([old, row]) => {
    if (!old) return { status: "added", before: null, after: row, fields: [] };
    const fields = PARAMETER_FIELDS.filter((field) => old[field].trim() !== row[field].trim());
    return { status: fields.length > 0 ? "changed" : "unchanged", before: old, after: row, fields };
  });
  for (const old of oldRows) if (unmatched.has(old)) changes.push({ status: "removed", before: old, after: null, fields: [] });
  return changes;
}

/**
 * Pairs the cells of two documents: by id when the kind agrees (ids are stable
 * while a notebook is edited), then the remaining cells of a kind in order (a
 * document rebuilt from a model file gets new ids).
 */
function pairCells(before: DerivationDocument, after: DerivationDocument): Map<Cell, Cell> {
  const pairs = new Map<Cell, Cell>();
  const unpaired = new Set(before.cells);
  for (const cell of after.cells) {
    const match = before.cells.find((old) => unpaired.has(old) && old.id === cell.id && old.kind === cell.kind);
    if (match) {
      pairs.set(cell, match);
      unpaired.delete(match);
    }
  }
  for (const cell of after.cells) {
    if (pairs.has(cell)) continue;
    const match = before.cells.find((old) => unpaired.has(old) && old.kind === cell.kind);
    if (match) {
      pairs.set(cell, match);
      unpaired.delete(match);
    }
  }
  return pairs;
}

/** Compares two documents cell by cell, in the newer document's order, removed cells last. */
export function compareDocuments(before: DerivationDocument, after: DerivationDocument): DocumentComparison {
  const pairs = pairCells(before, after);
  const paired = new Set(pairs.values());
  const cells = [
    ...after.cells.map((cell) => cellChange(pairs.get(cell), cell)),
    ...before.cells.filter((cell) => !paired.has(cell)).map((cell) => cellChange(cell, undefined)),
  ];
  const commonOld = before.cells.filter((cell) => paired.has(cell));
  const commonNew = after.cells.filter((cell) => pairs.has(cell)).map((cell) => pairs.get(cell)!);
  const moved = commonOld.some((cell, i) => commonNew[i] !== cell);
  const title = { before: before.title, after: after.title, changed: before.title !== after.title };
  return {
    title,
    cells,
    parameters: compareParameters(before, after),
    moved,
    sameText: !title.changed && cells.every((cell) => cell.status === "unchanged"),
  };
}
