/**
 * A person's own view of a derivation: the equation form, equilibrium and code
 * language they chose, and the simulation settings they tried. Kept per person
 * and derivation, apart from the document: the document's cell settings stay
 * the author's defaults, and a choice here is laid over them for that person
 * only. Changing a choice never changes the document, so readers may make them.
 *
 * @example
 *   const mine = setViewChoice(EMPTY_VIEW_PREFERENCES, "eq1", { form: "mass-matrix" });
 *   personalCell(equationsCell, mine).settings.form; // "mass-matrix", whatever the author chose
 */
import * as z from "zod/mini";
import { CODE_EXPORT_LANGUAGES, EQUATION_FORMS, simulationSettingsSchema as documentSimulationSettingsSchema, type Cell } from "./document";

export const VIEW_PREFERENCES_SCHEMA_VERSION = 1;

/** Longest stored preferences (JSON characters): room for many cells' choices and simulation settings. */
export const MAX_VIEW_PREFERENCES_LENGTH = 64_000;

/** A person's own simulation settings: any of the document's simulation settings, laid over the author's. */
const simulationSettingsSchema = z.partial(documentSimulationSettingsSchema);

const viewChoiceSchema = z.strictObject({
  form: z.optional(z.enum(EQUATION_FORMS)),
  equilibriumIndex: z.optional(z.int().check(z.minimum(0), z.maximum(1000))),
  language: z.optional(z.enum(CODE_EXPORT_LANGUAGES)),
  /** Over the simulation cell's settings, for a person who may not edit the document. */
  simulation: z.optional(simulationSettingsSchema),
});

export const viewPreferencesSchema = z
  .strictObject({
    schemaVersion: z.literal(VIEW_PREFERENCES_SCHEMA_VERSION),
    /** Choices by cell id; a choice for a cell that no longer exists is ignored. */
    cells: z.record(z.string().check(z.minLength(1), z.maxLength(64)), viewChoiceSchema),
    /** Settings of the person's own simulation of a derivation that has no simulation cell. */
    ownSimulation: z.optional(simulationSettingsSchema),
  })
  .check(z.refine((value) => JSON.stringify(value).length <= MAX_VIEW_PREFERENCES_LENGTH, { message: "The view preferences are too large." }));

export type ViewPreferences = z.infer<typeof viewPreferencesSchema>;
export type ViewChoice = z.infer<typeof viewChoiceSchema>;

export const EMPTY_VIEW_PREFERENCES: ViewPreferences = { schemaVersion: VIEW_PREFERENCES_SCHEMA_VERSION, cells: {} };

/** Stored preferences, or none when they cannot be read (they are a convenience, never worth an error). */
export function readViewPreferences(stored: unknown): ViewPreferences {
  const parsed = viewPreferencesSchema.safeParse(stored);
  return parsed.success ? parsed.data : EMPTY_VIEW_PREFERENCES;
}

/** Lays `patch` over the choice for `cellId`; `undefined` values drop a choice (back to the author's default). */
export function setViewChoice(
  preferences: ViewPreferences,
  cellId: string,
  patch: Partial<Record<keyof ViewChoice, ViewChoice[keyof ViewChoice] | undefined>>,
): ViewPreferences {
  const merged: Record<string, unknown> = { ...preferences.cells[cellId] };
  for (const [key, value] of Object.entries(patch)) {
    if (value === undefined) delete merged[key];
    else merged[key] = value;
  }
  const cells = { ...preferences.cells };
  if (Object.keys(merged).length === 0) delete cells[cellId];
  else cells[cellId] = merged as ViewChoice;
  return { ...preferences, cells };
}

/** The setting of each generated cell kind that is a view choice. */
export const VIEW_CHOICE_KEYS = { equations: "form", linearization: "equilibriumIndex", "code-export": "language" } as const satisfies Partial<
  Record<Cell["kind"], keyof ViewChoice>
>;

/** The choice laid over a cell's settings; simulation settings only when they are the person's own. */
function choiceFor(cell: Cell, choice: ViewChoice | undefined, ownSimulation: boolean): Record<string, unknown> | null {
  if (!choice) return null;
  if (cell.kind === "simulation") return ownSimulation && choice.simulation ? choice.simulation : null;
  const key = VIEW_CHOICE_KEYS[cell.kind as keyof typeof VIEW_CHOICE_KEYS] as keyof ViewChoice | undefined;
  return key && choice[key] !== undefined ? { [key]: choice[key] } : null;
}

/**
 * The cell as this person sees it: the author's settings with the person's
 * choices laid over them. Simulation settings are laid over only when
 * `ownSimulation` says the person keeps their own (they may not edit the document).
 */
export function personalCell<C extends Cell>(cell: C, preferences: ViewPreferences, { ownSimulation = false }: { ownSimulation?: boolean } = {}): C {
  const patch = choiceFor(cell, preferences.cells[cell.id], ownSimulation);
  if (!patch || !("settings" in cell)) return cell;
  return { ...cell, settings: { ...cell.settings, ...patch } };
}
