/** New cells, rows and documents. */
import { DocumentError } from "./errors";
import {
  DEFAULT_SIMULATION_SETTINGS,
  DEFAULT_STUDY_SETTINGS,
  DOCUMENT_SCHEMA_VERSION,
  type Cell,
  type CellKind,
  type CellOfKind,
  type DerivationDocument,
  type EnergyCell,
  type RowOf,
  type TableCell,
  type TableKind,
} from "./schema";

/**
 * A short random id. Uses `crypto.getRandomValues`, which (unlike randomUUID)
 * also exists on pages served without TLS.
 */
export function createId(): string {
  const bytes = new Uint8Array(9);
  globalThis.crypto.getRandomValues(bytes);
  let id = "";
  for (const byte of bytes) id += (byte % 36).toString(36);
  return id;
}

export function emptyRow<K extends TableKind>(kind: K, id: string = createId()): RowOf<K> {
  switch (kind) {
    case "parameters":
      return { id, name: "", unit: "", value: "", description: "" } as RowOf<K>;
    case "definitions":
    case "constraints":
    case "rate-constraints":
      return { id, name: "", expr: "", description: "" } as RowOf<K>;
    case "outputs":
      return { id, name: "", expr: "", unit: "", description: "" } as RowOf<K>;
    default:
      return { id, name: "", unit: "", description: "" } as RowOf<K>;
  }
}

/** A new, empty cell of the given kind. */
export function createCell<K extends CellKind>(kind: K, id: string = createId()): CellOfKind<K> {
  const base = { id, collapsed: false };
  let cell: Cell;
  switch (kind) {
    case "coordinates":
    case "parameters":
    case "inputs":
    case "definitions":
    case "constraints":
    case "rate-constraints":
    case "outputs":
      cell = { ...base, kind, rows: [] } as TableCell;
      break;
    case "kinetic":
    case "potential":
    case "dissipation":
      cell = { ...base, kind, expr: "" } as EnergyCell;
      break;
    case "forces":
      cell = { ...base, kind: "forces", entries: [] };
      break;
    case "note":
      cell = { ...base, kind: "note", markdown: "" };
      break;
    case "equations":
      cell = { ...base, kind: "equations", settings: { form: "residual" } };
      break;
    case "conserved":
      cell = { ...base, kind: "conserved", settings: {} };
      break;
    case "linearization":
      cell = { ...base, kind: "linearization", settings: { equilibriumIndex: 0, inputValues: {} } };
      break;
    case "code-export":
      cell = { ...base, kind: "code-export", settings: { language: "python" } };
      break;
    case "simulation":
      cell = { ...base, kind: "simulation", settings: structuredClone(DEFAULT_SIMULATION_SETTINGS) };
      break;
    case "study":
      cell = { ...base, kind: "study", settings: structuredClone(DEFAULT_STUDY_SETTINGS) };
      break;
    default: {
      const unknown: never = kind;
      throw new DocumentError("kind", `unknown cell kind "${String(unknown)}"`);
    }
  }
  return cell as CellOfKind<K>;
}

/** The document a new blank derivation starts from: the cells every derivation needs, empty. */
export function blankDocument(title = "Untitled derivation", newId: () => string = createId): DerivationDocument {
  const kinds: CellKind[] = ["coordinates", "parameters", "definitions", "kinetic", "potential", "equations"];
  return { schemaVersion: DOCUMENT_SCHEMA_VERSION, title, cells: kinds.map((kind) => createCell(kind, newId())) };
}
