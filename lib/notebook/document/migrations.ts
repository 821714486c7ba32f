/**
 * The stored shape's history: one step per schema version, each a pure
 * function from a document of version n to one of version n + 1.
 *
 * Steps work on plain JSON and never call the current construction code, so a
 * later change to the document cannot change what an old step produces. A step
 * that meets a value it cannot convert throws a `MigrationError` listing the
 * problems; anything else it leaves for the current schema to judge.
 */
import * as z from "zod/mini";
import { formatIssuePath, type DocumentIssue } from "./errors";
import { DEFAULT_SIMULATION_SETTINGS, type DerivationDocument, type SimulationSettings } from "./schema";

type JsonObject = { [field: string]: unknown };

/** Version 0: a model file stored before the notebook existed, or `{}` for a row never given content. */
export type StoredContentVersion0 = { schemaVersion?: undefined; cells?: undefined; [field: string]: unknown };
/** Version 2: typed simulation settings; no constraint or output cells yet. */
export type StoredDocumentVersion2 = { schemaVersion: 2; title: string; cells: JsonObject[] };
/** Version 1: the first notebook document; the simulation cell's settings were free-form. */
export type StoredDocumentVersion1 = { schemaVersion: 1; title: string; cells: JsonObject[] };
/**
 * What a derivation's stored content may hold: a document of the current
 * version, or one an older version of Holonomy wrote. Read it through
 * `parseStoredDocument`, which migrates and validates.
 */
export type StoredDocument = DerivationDocument | StoredDocumentVersion2 | StoredDocumentVersion1 | StoredContentVersion0;

/** A stored value a migration step cannot convert, with the problems at their paths. */
export class MigrationError extends Error {
  readonly issues: DocumentIssue[];
  constructor(issues: DocumentIssue[]) {
    super(issues.map((issue) => `${issue.path}: ${issue.message}`).join("; "));
    this.name = "MigrationError";
    this.issues = issues;
  }
}

export interface DocumentMigration {
  /** The version the step reads; it writes `from + 1`. */
  from: number;
  /** What changed in the stored shape. */
  change: string;
  up: (stored: JsonObject) => JsonObject;
}

function isObject(value: unknown): value is JsonObject {
  return typeof value === "object" && value !== null && !Array.isArray(value);
}

// ---------------------------------------------------------------------------
// 0 → 1: a model file becomes a notebook document

// The model file's structure only: expressions and names are the engine's to
// judge when the derivation is evaluated, so a stored file with a typo still opens.
const namedUnitV0 = z.object({ name: z.string(), unit: z.optional(z.string()), description: z.optional(z.string()) });
const modelFileV0 = z.object({
  title: z.optional(z.string()),
  coordinates: z.optional(z.array(namedUnitV0)),
  parameters: z.optional(z.array(z.object({ ...namedUnitV0.shape, value: z.optional(z.number().check(z.refine(Number.isFinite, "not a finite number"))) }))),
  inputs: z.optional(z.array(namedUnitV0)),
  definitions: z.optional(z.array(z.object({ name: z.string(), expr: z.string(), description: z.optional(z.string()) }))),
  kinetic: z.optional(z.string()),
  potential: z.optional(z.string()),
  dissipation: z.optional(z.string()),
  forces: z.optional(z.record(z.string(), z.string())),
});

function notebookFromModelFile(stored: JsonObject): JsonObject {
  const parsed = modelFileV0.safeParse(stored);
  if (!parsed.success) throw new MigrationError(parsed.error.issues.map((issue) => ({ path: formatIssuePath(issue.path), message: issue.message })));
  const model = parsed.data;
  const title = model.title ?? "";
  let cellCount = 0;
  const cell = (kind: string, body: JsonObject) => ({ id: `c${(cellCount += 1)}`, collapsed: false, kind, ...body });
  const rows = <T>(list: T[], row: (entry: T) => JsonObject) => list.map((entry, i) => ({ id: `r${i + 1}`, ...row(entry) }));
  const namedUnit = ({ name, unit, description }: z.infer<typeof namedUnitV0>) => ({ name, unit: unit ?? "", description: description ?? "" });

  // A row that never had content (a title at most) opens as a blank derivation.
  if (Object.keys(stored).every((field) => field === "title")) {
    return {
      schemaVersion: 1,
      title,
      cells: [
        cell("coordinates", { rows: [] }),
        cell("parameters", { rows: [] }),
        cell("definitions", { rows: [] }),
        cell("kinetic", { expr: "" }),
        cell("potential", { expr: "" }),
        cell("equations", { settings: { form: "residual" } }),
      ],
    };
  }
  const cells: JsonObject[] = [
    cell("coordinates", { rows: rows(model.coordinates ?? [], namedUnit) }),
    cell("parameters", { rows: rows(model.parameters ?? [], (p) => ({ ...namedUnit(p), value: p.value === undefined ? "" : String(p.value) })) }),
  ];
  if (model.inputs && model.inputs.length > 0) cells.push(cell("inputs", { rows: rows(model.inputs, namedUnit) }));
  if (model.definitions && model.definitions.length > 0) {
    cells.push(cell("definitions", { rows: rows(model.definitions, (d) => ({ name: d.name, expr: d.expr, description: d.description ?? "" })) }));
  }
  cells.push(cell("kinetic", { expr: model.kinetic ?? "" }), cell("potential", { expr: model.potential ?? "" }));
  if (model.dissipation !== undefined && model.dissipation.trim() !== "") cells.push(cell("dissipation", { expr: model.dissipation }));
  if (model.forces && Object.keys(model.forces).length > 0) {
    cells.push(cell("forces", { entries: Object.entries(model.forces).map(([coordinate, expr]) => ({ coordinate, expr })) }));
  }
  cells.push(cell("equations", { settings: { form: "residual" } }), cell("conserved", { settings: {} }));
  return { schemaVersion: 1, title, cells };
}

// ---------------------------------------------------------------------------
// 1 → 2: the simulation cell's settings get their shape

function textOf(value: unknown): string | undefined {
  if (typeof value === "string") return value;
  // A number sent by a script reads as the text it would have been typed as.
  if (typeof value === "number" && Number.isFinite(value)) return String(value);
  return undefined;
}

function textRecord(value: unknown): Record<string, string> {
  if (!isObject(value)) return {};
  const entries: [string, string][] = [];
  for (const [key, entry] of Object.entries(value)) {
    const text = textOf(entry);
    if (text !== undefined) entries.push([key, text]);
  }
  return Object.fromEntries(entries);
}

/**
 * Every setting the form knows, with the default for one that is missing or
 * not text. Keys the form never wrote are dropped: nothing reads them, and the
 * current schema refuses unknown keys.
 */
function simulationSettingsFrom(raw: unknown): SimulationSettings {
  const settings = isObject(raw) ? raw : {};
  const points = Array.isArray(settings.points)
    ? settings.points.flatMap((point: unknown) =>
        isObject(point) && typeof point.x === "string" && typeof point.y === "string" ? [{ x: point.x, y: point.y }] : [],
      )
    : [];
  return {
    initialCoordinates: textRecord(settings.initialCoordinates),
    initialRates: textRecord(settings.initialRates),
    startTime: textOf(settings.startTime) ?? DEFAULT_SIMULATION_SETTINGS.startTime,
    endTime: textOf(settings.endTime) ?? DEFAULT_SIMULATION_SETTINGS.endTime,
    outputStep: textOf(settings.outputStep) ?? DEFAULT_SIMULATION_SETTINGS.outputStep,
    tolerance: textOf(settings.tolerance) ?? DEFAULT_SIMULATION_SETTINGS.tolerance,
    inputs: textRecord(settings.inputs),
    parameterOverrides: textRecord(settings.parameterOverrides),
    points,
  };
}

function typedSimulationSettings(stored: JsonObject): JsonObject {
  const cells = Array.isArray(stored.cells)
    ? stored.cells.map((cell: unknown) => (isObject(cell) && cell.kind === "simulation" ? { ...cell, settings: simulationSettingsFrom(cell.settings) } : cell))
    : stored.cells;
  return { ...stored, schemaVersion: 2, cells };
}

// ---------------------------------------------------------------------------
// 2 → 3: constraint, rate-constraint and output cells exist; the linearization
// cell may choose outputs and an input. Both are additions, so a version-2
// document is already a version-3 one; the step marks it so that an older
// Holonomy refuses a document that may hold the new cells.

function constraintCellsExist(stored: JsonObject): JsonObject {
  return { ...stored, schemaVersion: 3 };
}

// ---------------------------------------------------------------------------

/** Every step, oldest first; the last one writes `DOCUMENT_SCHEMA_VERSION`. */
export const DOCUMENT_MIGRATIONS: readonly DocumentMigration[] = [
  { from: 0, change: "a pre-notebook model file becomes a notebook document", up: notebookFromModelFile },
  { from: 1, change: "the simulation cell's settings are typed, with defaults for missing ones", up: typedSimulationSettings },
  { from: 2, change: "constraint, rate-constraint and output cells; the linearization cell chooses outputs and an input", up: constraintCellsExist },
];

/**
 * The version a stored value was written at: its `schemaVersion`, or 0 for a
 * pre-notebook model file (an object with neither a version nor cells).
 * `undefined` for a value that is neither.
 */
export function storedVersionOf(stored: unknown): number | undefined {
  if (!isObject(stored)) return undefined;
  if (stored.schemaVersion === undefined) return stored.cells === undefined ? 0 : undefined;
  return typeof stored.schemaVersion === "number" && Number.isInteger(stored.schemaVersion) && stored.schemaVersion >= 1 ? stored.schemaVersion : undefined;
}

/**
 * Runs the steps from `version` up to the current version. Throws a
 * `MigrationError` when a step cannot convert the value.
 */
export function migrateDocument(stored: JsonObject, version: number): JsonObject {
  let current = stored;
  for (const migration of DOCUMENT_MIGRATIONS) if (migration.from >= version) current = migration.up(current);
  return current;
}
