/**
 * The stored shape of a derivation document: one zod schema, and every type of
 * the document inferred from it. An older stored shape is brought up to this
 * one by `migrations.ts` before it is checked here.
 */
// zod/mini: the tree-shakable build, so the browser bundle carries a few kB rather than all of zod.
import * as z from "zod/mini";

// zod tries `new Function` once to see whether it may compile parsers. In a browser page or
// worker the Content-Security-Policy forbids eval, so that try is reported as a violation:
// tell zod up front, before this module's schemas parse anything (the shared document is
// validated in the browser). lib/validation/zod-config.ts does the same for full zod.
if (typeof window !== "undefined" || "WorkerGlobalScope" in globalThis) z.config({ jitless: true });

/** Bump with a new entry in `DOCUMENT_MIGRATIONS` whenever the stored shape changes. */
export const DOCUMENT_SCHEMA_VERSION = 3;

/**
 * Size limits of a stored document; a request over them is refused with the
 * field's path. Each is at least what the engine accepts in a model file
 * (lib/mechanics), so every model file that imports fits in a notebook.
 */
export const DOCUMENT_LIMITS = { cells: 300, rows: 200, name: 64, unit: 120, value: 64, expr: 8000, text: 4000, note: 50_000, id: 64, title: 200 } as const;

const text = (max: number, min = 0) =>
  z.string().check(z.minLength(min, min === 1 ? "must not be empty" : `at least ${min} characters`), z.maxLength(max, `at most ${max} characters`));
const idText = text(DOCUMENT_LIMITS.id, 1);
const nameText = text(DOCUMENT_LIMITS.name);
const unitText = text(DOCUMENT_LIMITS.unit);
/** A number as typed (kept as text so a half-written number is never lost); blank means none. */
const valueText = text(DOCUMENT_LIMITS.value);
const exprText = text(DOCUMENT_LIMITS.expr);
const descriptionText = text(DOCUMENT_LIMITS.text);

// ---------------------------------------------------------------------------
// Rows

const coordinateRowSchema = z.strictObject({ id: idText, name: nameText, unit: unitText, description: descriptionText });
/** `value` is kept as typed; blank means the parameter stays symbolic. */
const parameterRowSchema = z.strictObject({ id: idText, name: nameText, unit: unitText, value: valueText, description: descriptionText });
const definitionRowSchema = z.strictObject({ id: idText, name: nameText, expr: exprText, description: descriptionText });
/** A position constraint (expr = 0, of coordinates, t and parameters) or a rate constraint (expr = 0, linear in the rates). */
const constraintRowSchema = z.strictObject({ id: idText, name: nameText, expr: exprText, description: descriptionText });
/** A named quantity evaluated along every simulation (a rope tension, a pin load), checked against its unit. */
const outputRowSchema = z.strictObject({ id: idText, name: nameText, expr: exprText, unit: unitText, description: descriptionText });
/** A generalized force, keyed by the coordinate's name. */
const forceEntrySchema = z.strictObject({ coordinate: nameText, expr: exprText });

export type CoordinateRow = z.infer<typeof coordinateRowSchema>;
export type InputRow = CoordinateRow;
export type ParameterRow = z.infer<typeof parameterRowSchema>;
export type DefinitionRow = z.infer<typeof definitionRowSchema>;
export type ForceEntry = z.infer<typeof forceEntrySchema>;
export type ConstraintRow = z.infer<typeof constraintRowSchema>;
export type OutputRow = z.infer<typeof outputRowSchema>;

function rowList<T extends { id: string }>(row: z.ZodMiniType<T>) {
  return z.array(row).check(
    z.maxLength(DOCUMENT_LIMITS.rows),
    z.refine((list: T[]) => new Set(list.map((entry) => entry.id)).size === list.length, { message: "row ids must be unique within a cell" }),
  );
}

// ---------------------------------------------------------------------------
// Settings of generated cells

export const EQUATION_FORMS = ["residual", "mass-matrix", "accelerations"] as const;
export type EquationForm = (typeof EQUATION_FORMS)[number];

export const CODE_EXPORT_LANGUAGES = ["python", "typescript", "c", "julia", "octave"] as const;
export type CodeExportLanguage = (typeof CODE_EXPORT_LANGUAGES)[number];

/**
 * The simulation cell's settings, as typed in its form (text, so a
 * half-written number is never lost); `components/notebook/simulation/settings.ts`
 * turns them into the numbers a run takes.
 */
export const simulationSettingsSchema = z.strictObject({
  /** Initial coordinate values by coordinate name; blank means 0. */
  initialCoordinates: z.record(nameText, valueText),
  /** Initial rates by coordinate name; blank means 0. */
  initialRates: z.record(nameText, valueText),
  startTime: valueText,
  endTime: valueText,
  outputStep: valueText,
  /** Relative tolerance of the integrator. */
  tolerance: valueText,
  /** Inputs as expressions of t and the parameters, by input name. */
  inputs: z.record(nameText, exprText),
  /** Parameter values replacing the Parameters cell for this simulation only. */
  parameterOverrides: z.record(nameText, valueText),
  /** Points of the mechanism to draw, each a pair of definition names giving x and y. */
  points: z.array(z.strictObject({ x: nameText, y: nameText })).check(z.maxLength(DOCUMENT_LIMITS.rows)),
});
export type SimulationSettings = z.infer<typeof simulationSettingsSchema>;
export type PointPair = SimulationSettings["points"][number];

/** What a new simulation cell starts with, and what a migration fills in for a missing setting. */
export const DEFAULT_SIMULATION_SETTINGS: SimulationSettings = {
  initialCoordinates: {},
  initialRates: {},
  startTime: "0",
  endTime: "10",
  outputStep: "0.01",
  tolerance: "1e-8",
  inputs: {},
  parameterOverrides: {},
  points: [],
};

/** Limits of a study cell; the server refuses a study over them with the field's path. */
export const STUDY_LIMITS = { parameters: 8, cases: 20, samples: 5000, runs: 5000, watch: 50 } as const;
export const STUDY_MODES = ["grid", "tolerance"] as const;
export type StudyMode = (typeof STUDY_MODES)[number];
export const STUDY_DISTRIBUTIONS = ["uniform", "normal"] as const;
export type StudyDistribution = (typeof STUDY_DISTRIBUTIONS)[number];

/**
 * One varied parameter of a study. A grid reads `values` (a list "0.5, 1, 2" or a range
 * "from:to:count"); a tolerance run reads the distribution: uniform over min … max, or normal
 * (mean, sd) truncated to min … max. Every field is text as typed; `lib/study` parses it.
 */
const studyParameterSchema = z.strictObject({
  name: nameText,
  values: descriptionText,
  distribution: z.enum(STUDY_DISTRIBUTIONS),
  min: valueText,
  max: valueText,
  mean: valueText,
  sd: valueText,
});
export type StudyParameter = z.infer<typeof studyParameterSchema>;

/** An operating case: initial state and inputs; every parameter sample runs once per case. */
const studyCaseSchema = z.strictObject({
  name: nameText,
  initialCoordinates: z.record(nameText, valueText),
  initialRates: z.record(nameText, valueText),
  /** Inputs as expressions of t and the parameters, by input name (like the simulation cell). */
  inputs: z.record(nameText, exprText),
});
export type StudyCase = z.infer<typeof studyCaseSchema>;

/** The study cell's settings, as typed; `lib/study` turns them into the runs of a study. */
export const studySettingsSchema = z.strictObject({
  mode: z.enum(STUDY_MODES),
  /** Tolerance mode: sampled runs per case (1 … 5000); ignored for a grid. */
  samples: valueText,
  /** Tolerance mode: the sampler's seed (an integer), so a study can be repeated exactly. */
  seed: valueText,
  parameters: z.array(studyParameterSchema).check(z.maxLength(STUDY_LIMITS.parameters, `at most ${STUDY_LIMITS.parameters} parameters`)),
  cases: z.array(studyCaseSchema).check(z.maxLength(STUDY_LIMITS.cases, `at most ${STUDY_LIMITS.cases} cases`)),
  startTime: valueText,
  endTime: valueText,
  outputStep: valueText,
  tolerance: valueText,
  /** Names to watch: outputs, multipliers ("lambda_<constraint>", "mu_<constraint>") and coordinates. */
  watch: z.array(nameText).check(z.maxLength(STUDY_LIMITS.watch, `at most ${STUDY_LIMITS.watch} watched names`)),
});
export type StudySettings = z.infer<typeof studySettingsSchema>;

/** What a new study cell starts with. */
export const DEFAULT_STUDY_SETTINGS: StudySettings = {
  mode: "grid",
  samples: "100",
  seed: "1",
  parameters: [],
  cases: [{ name: "nominal", initialCoordinates: {}, initialRates: {}, inputs: {} }],
  startTime: "0",
  endTime: "10",
  outputStep: "0.01",
  tolerance: "1e-8",
  watch: [],
};

// ---------------------------------------------------------------------------
// Cells

const cellBase = {
  id: idText,
  collapsed: z.boolean(),
  /** A title the analyst gave the cell; the kind's label is used when absent. */
  title: z.optional(text(DOCUMENT_LIMITS.title)),
};

/** One cell of any kind; `kind` picks the shape. */
export const cellSchema = z.discriminatedUnion("kind", [
  z.strictObject({ ...cellBase, kind: z.literal("coordinates"), rows: rowList(coordinateRowSchema) }),
  z.strictObject({ ...cellBase, kind: z.literal("parameters"), rows: rowList(parameterRowSchema) }),
  z.strictObject({ ...cellBase, kind: z.literal("inputs"), rows: rowList(coordinateRowSchema) }),
  z.strictObject({ ...cellBase, kind: z.literal("definitions"), rows: rowList(definitionRowSchema) }),
  z.strictObject({ ...cellBase, kind: z.literal("constraints"), rows: rowList(constraintRowSchema) }),
  z.strictObject({ ...cellBase, kind: z.literal("rate-constraints"), rows: rowList(constraintRowSchema) }),
  z.strictObject({ ...cellBase, kind: z.literal("outputs"), rows: rowList(outputRowSchema) }),
  z.strictObject({ ...cellBase, kind: z.enum(["kinetic", "potential", "dissipation"]), expr: exprText }),
  z.strictObject({
    ...cellBase,
    kind: z.literal("forces"),
    entries: z.array(forceEntrySchema).check(
      z.maxLength(DOCUMENT_LIMITS.rows),
      z.refine((list: ForceEntry[]) => new Set(list.map((entry) => entry.coordinate)).size === list.length, { message: "one force per coordinate" }),
    ),
  }),
  z.strictObject({
    ...cellBase,
    kind: z.literal("note"),
    /** Markdown with $inline$ and $$display$$ math. */
    markdown: text(DOCUMENT_LIMITS.note),
  }),
  z.strictObject({ ...cellBase, kind: z.literal("equations"), settings: z.strictObject({ form: z.enum(EQUATION_FORMS) }) }),
  z.strictObject({ ...cellBase, kind: z.literal("conserved"), settings: z.strictObject({}) }),
  z.strictObject({
    ...cellBase,
    kind: z.literal("linearization"),
    settings: z.strictObject({
      /** Index into the equilibria the engine found for the current parameter values. */
      equilibriumIndex: z.int().check(z.minimum(0), z.maximum(1000)),
      /** Input values at the operating point, as typed (blank means 0). */
      inputValues: z.record(nameText, valueText),
      /** The outputs y = C x + D u of the frequency response: names of coordinates or of rows of the Outputs cell; absent, none chosen. */
      outputs: z.optional(z.array(nameText).check(z.maxLength(DOCUMENT_LIMITS.rows))),
      /** The input of the frequency response; absent or blank, the first input. */
      input: z.optional(nameText),
    }),
  }),
  z.strictObject({ ...cellBase, kind: z.literal("code-export"), settings: z.strictObject({ language: z.enum(CODE_EXPORT_LANGUAGES) }) }),
  z.strictObject({ ...cellBase, kind: z.literal("simulation"), settings: simulationSettingsSchema }),
  /** A parameter study (grid or tolerance run); not a singleton, a notebook may hold several. */
  z.strictObject({ ...cellBase, kind: z.literal("study"), settings: studySettingsSchema }),
]);

export type Cell = z.infer<typeof cellSchema>;
export type CellKind = Cell["kind"];
export type CoordinatesCell = Extract<Cell, { kind: "coordinates" }>;
export type ParametersCell = Extract<Cell, { kind: "parameters" }>;
export type InputsCell = Extract<Cell, { kind: "inputs" }>;
export type DefinitionsCell = Extract<Cell, { kind: "definitions" }>;
export type ConstraintsCell = Extract<Cell, { kind: "constraints" }>;
export type RateConstraintsCell = Extract<Cell, { kind: "rate-constraints" }>;
export type OutputsCell = Extract<Cell, { kind: "outputs" }>;
export type EnergyCell = Extract<Cell, { kind: "kinetic" | "potential" | "dissipation" }>;
export type ForcesCell = Extract<Cell, { kind: "forces" }>;
export type NoteCell = Extract<Cell, { kind: "note" }>;
export type EquationsCell = Extract<Cell, { kind: "equations" }>;
export type ConservedCell = Extract<Cell, { kind: "conserved" }>;
export type LinearizationCell = Extract<Cell, { kind: "linearization" }>;
export type CodeExportCell = Extract<Cell, { kind: "code-export" }>;
export type SimulationCell = Extract<Cell, { kind: "simulation" }>;
export type StudyCell = Extract<Cell, { kind: "study" }>;

export type TableCell = CoordinatesCell | ParametersCell | InputsCell | DefinitionsCell | ConstraintsCell | RateConstraintsCell | OutputsCell;
export type SourceCell = TableCell | EnergyCell | ForcesCell | NoteCell;
export type GeneratedCell = EquationsCell | ConservedCell | LinearizationCell | CodeExportCell | SimulationCell | StudyCell;
export type TableKind = TableCell["kind"];
export type EnergyKind = EnergyCell["kind"];
export type GeneratedKind = GeneratedCell["kind"];
/** The cell type for one kind (energy cells share one shape). */
export type CellOfKind<K extends CellKind> = K extends EnergyKind ? EnergyCell & { kind: K } : Extract<Cell, { kind: K }>;
export type RowOf<K extends TableKind> = Extract<TableCell, { kind: K }>["rows"][number];
export type AnyRow = TableCell["rows"][number];
export type SettingsOf<K extends GeneratedKind> = Extract<GeneratedCell, { kind: K }>["settings"];

export const TABLE_KINDS: readonly TableKind[] = ["coordinates", "parameters", "inputs", "definitions", "constraints", "rate-constraints", "outputs"];
export const ENERGY_KINDS: readonly EnergyKind[] = ["kinetic", "potential", "dissipation"];
export const GENERATED_KINDS: readonly GeneratedKind[] = ["equations", "conserved", "linearization", "code-export", "simulation", "study"];
export const CELL_KINDS: readonly CellKind[] = [...TABLE_KINDS, ...ENERGY_KINDS, "forces", "note", ...GENERATED_KINDS];

/**
 * Kinds a document holds at most once: the model has one kinetic energy, one
 * potential, one dissipation function and one force per coordinate.
 */
export const SINGLETON_KINDS: ReadonlySet<CellKind> = new Set<CellKind>(["kinetic", "potential", "dissipation", "forces"]);

export const CELL_LABELS: Record<CellKind, string> = {
  coordinates: "Coordinates",
  parameters: "Parameters",
  inputs: "Inputs",
  definitions: "Definitions",
  constraints: "Constraints",
  "rate-constraints": "Rate constraints",
  outputs: "Outputs",
  kinetic: "Kinetic energy",
  potential: "Potential energy",
  dissipation: "Dissipation function",
  forces: "Generalized forces",
  note: "Note",
  equations: "Equations of motion",
  conserved: "Conserved quantities",
  linearization: "Linearization",
  "code-export": "Code export",
  simulation: "Simulation",
  study: "Parameter study",
};

export function isTableCell(cell: Cell): cell is TableCell {
  return (TABLE_KINDS as readonly string[]).includes(cell.kind);
}
export function isEnergyCell(cell: Cell): cell is EnergyCell {
  return (ENERGY_KINDS as readonly string[]).includes(cell.kind);
}
export function isGeneratedCell(cell: Cell): cell is GeneratedCell {
  return (GENERATED_KINDS as readonly string[]).includes(cell.kind);
}

// ---------------------------------------------------------------------------
// The document

/** zod schema of a document at the current schema version. */
export const derivationDocumentSchema = z
  .strictObject({
    schemaVersion: z.literal(DOCUMENT_SCHEMA_VERSION),
    title: text(DOCUMENT_LIMITS.title),
    cells: z.array(cellSchema).check(z.maxLength(DOCUMENT_LIMITS.cells)),
  })
  .check(
    z.superRefine((doc, ctx) => {
      const ids = new Set<string>();
      const seen = new Set<string>();
      doc.cells.forEach((cell, index) => {
        if (ids.has(cell.id)) ctx.addIssue({ code: "custom", path: ["cells", index, "id"], message: `duplicate cell id "${cell.id}"`, input: cell.id });
        ids.add(cell.id);
        if (SINGLETON_KINDS.has(cell.kind)) {
          if (seen.has(cell.kind))
            ctx.addIssue({ code: "custom", path: ["cells", index, "kind"], message: `more than one ${cell.kind} cell`, input: cell.kind });
          seen.add(cell.kind);
        }
      });
    }),
  );

export type DerivationDocument = z.infer<typeof derivationDocumentSchema>;
