/**
 * Server-side evaluation of a notebook: the document's model is derived in the
 * engine's worker threads, and the results are assembled into what the
 * notebook renders (NotebookResults). Results are keyed by a SHA-256 of the
 * normalised model, the evaluation settings and the engine version, so the
 * route and the demo seed can cache them in PostgreSQL.
 */
import { createHash } from "node:crypto";
import { fileBaseName } from "@/lib/files/names";
import {
  type CodeExportInput,
  type CodeLanguage,
  type AnalysisSystem,
  type Equilibrium,
  symbolLatex,
  type LatexTerm,
  matchEigenvalues,
  type Linearization,
  stabilityTolerance,
  type Model,
  type PrintedDerivation,
} from "@/lib/mechanics";
import { multiplierSymbol, stateSpaceOf, type OutputChoice } from "@/lib/mechanics";
import type { CodeExportLanguage, DerivationDocument, LinearizationCell } from "@/lib/notebook/document";
import type { ModeView, NotebookResults } from "@/lib/notebook/results";

/** Anything that runs the engine's named tasks: the server's EnginePool, or an in-process stand-in. */
export interface EngineRunner {
  run<T = unknown>(task: string, payload: unknown): Promise<T>;
}

/** Equilibrium choice and input values for the linearization. */
export interface LinearizationSettings {
  equilibriumIndex: number;
  /** Input values by name; missing or blank means 0. */
  inputValues: Record<string, string | number>;
}

export interface EvaluationSettings {
  linearization: LinearizationSettings;
  /** Languages of the document's code-export cells, as the document names them. */
  codeLanguages: CodeExportLanguage[];
}

export interface EvaluationTimings {
  deriveMs: number;
  latexMs: number;
  analysisMs: number;
  codeMs: number;
  totalMs: number;
}

/** What the evaluate API answers with besides the cache flag. */
export interface EvaluationResult extends NotebookResults {
  equations: (NotebookResults["equations"][number] & { terms: LatexTerm[] })[];
  coordinates: string[];
  /** M and f in the input syntax (residual = M q'' − f), for code export and the API. */
  massMatrix: string[][];
  forcing: string[];
  /** Coordinates neither M nor f contains (the engine's freeCoordinates): relinearizing a stored result keeps one equilibrium per continuum. */
  freeCoordinates?: string[];
  /** Why there is no linearization (symbolic parameters, no equilibrium found…); absent when there is one. */
  linearizationNote?: string;
  equilibria?: (Equilibrium & { label: string })[];
  /** The model's outputs, definitions expanded (the engine's), for the frequency response when relinearizing. */
  outputs?: { name: string; expr: string; unit: string }[];
  /** The model's constraints, definitions expanded (the engine's), for the equilibria and linearization when relinearizing. */
  constraintRows?: ConstraintRowText[];
}

/** A constraint as the analysis takes it across the worker boundary. */
export interface ConstraintRowText {
  name: string;
  kind: "position" | "rate";
  symbol: string;
  expr: string;
}

const CODE_LANGUAGE_OF: Record<CodeExportLanguage, CodeLanguage> = {
  python: "python",
  typescript: "typescript",
  c: "c",
  julia: "julia",
  octave: "matlab",
};
const CODE_EXTENSION: Record<CodeLanguage, string> = { python: "py", typescript: "ts", c: "c", julia: "jl", matlab: "m" };

/** The engine's language for a code language as the document or the code route names it. */
export function engineCodeLanguage(language: CodeExportLanguage | CodeLanguage): CodeLanguage {
  return language === "octave" ? "matlab" : language;
}

export function codeFileName(title: string, language: CodeLanguage): string {
  const base = fileBaseName(title, { separator: "_", fallback: "model", maxLength: 60 });
  return `${base}.${CODE_EXTENSION[language]}`;
}

/** The settings a document asks for: its first linearization cell and its code-export cells. */
export function settingsOfDocument(doc: DerivationDocument, override?: Partial<LinearizationSettings>): EvaluationSettings {
  const cell = doc.cells.find((c): c is LinearizationCell => c.kind === "linearization");
  const linearization = {
    equilibriumIndex: override?.equilibriumIndex ?? cell?.settings.equilibriumIndex ?? 0,
    inputValues: override?.inputValues ?? cell?.settings.inputValues ?? {},
  };
  const codeLanguages = [...new Set(doc.cells.flatMap((c) => (c.kind === "code-export" ? [c.settings.language] : [])))].sort();
  return { linearization, codeLanguages };
}

/** The model with what cannot change a result removed (descriptions) and strings trimmed, keys sorted. */
export function normalizeModel(model: Model): unknown {
  const named = (entry: { name: string; unit: string; value?: number }) => ({
    name: entry.name.trim(),
    unit: entry.unit.trim(),
    ...(entry.value !== undefined ? { value: entry.value } : {}),
  });
  return {
    title: model.title.trim(),
    coordinates: model.coordinates.map(named),
    parameters: model.parameters.map(named),
    inputs: (model.inputs ?? []).map(named),
    definitions: (model.definitions ?? []).map((d) => ({ name: d.name.trim(), expr: d.expr.trim() })),
    kinetic: model.kinetic.trim(),
    potential: model.potential.trim(),
    dissipation: (model.dissipation ?? "").trim(),
    forces: Object.fromEntries(
      Object.entries(model.forces ?? {})
        .map(([k, v]) => [k.trim(), v.trim()])
        .sort(([a], [b]) => ((a ?? "") < (b ?? "") ? -1 : 1)),
    ),
    // Present only when used, so the keys of models without them stay what they were.
    ...(model.constraints?.length ? { constraints: model.constraints.map((c) => ({ name: c.name.trim(), expr: c.expr.trim() })) } : {}),
    ...(model.rateConstraints?.length ? { rateConstraints: model.rateConstraints.map((c) => ({ name: c.name.trim(), expr: c.expr.trim() })) } : {}),
    ...(model.outputs?.length ? { outputs: model.outputs.map((o) => ({ name: o.name.trim(), expr: o.expr.trim(), unit: o.unit.trim() })) } : {}),
  };
}

function stableStringify(value: unknown): string {
  if (Array.isArray(value)) return `[${value.map(stableStringify).join(",")}]`;
  if (value !== null && typeof value === "object") {
    const entries = Object.entries(value as Record<string, unknown>).sort(([a], [b]) => (a < b ? -1 : a > b ? 1 : 0));
    return `{${entries.map(([k, v]) => `${JSON.stringify(k)}:${stableStringify(v)}`).join(",")}}`;
  }
  return JSON.stringify(value);
}

/** The cache key: SHA-256 of the normalised model, the settings that change the result, and the engine version. */
export function evaluationHash(model: Model, settings: EvaluationSettings, engineVersion: string): string {
  const inputValues = Object.fromEntries(
    (model.inputs ?? []).map((input) => [input.name.trim(), numberOrZero(settings.linearization.inputValues[input.name])]),
  );
  const key = {
    engineVersion,
    model: normalizeModel(model),
    linearization: { equilibriumIndex: settings.linearization.equilibriumIndex, inputValues },
    code: settings.codeLanguages,
  };
  return createHash("sha256").update(stableStringify(key)).digest("hex");
}

function numberOrZero(value: string | number | undefined): number {
  if (typeof value === "number") return Number.isFinite(value) ? value : 0;
  const trimmed = (value ?? "").trim();
  const parsed = trimmed === "" ? 0 : Number(trimmed);
  return Number.isFinite(parsed) ? parsed : Number.NaN;
}

function bmatrix(rows: string[][]): string {
  return `\\begin{bmatrix}${rows.map((row) => row.join(" & ")).join(" \\\\ ")}\\end{bmatrix}`;
}

/** M(q) q'' = f as one LaTeX display. */
export function massMatrixLatex(result: Pick<PrintedDerivation, "coordinates" | "latex">): string {
  const mass = bmatrix(result.latex.massMatrix);
  const accelerations = bmatrix(result.coordinates.map((name) => [symbolLatex(name, 2)]));
  const forcing = bmatrix(result.latex.forcing.map((entry) => [entry]));
  return `${mass}${accelerations} = ${forcing}`;
}

/** q'' written out where the engine solved M q'' = f in closed form, or its plain reason why not. */
export function accelerationsView(result: Pick<PrintedDerivation, "accelerations">): Pick<NotebookResults, "accelerations" | "accelerationsNote"> {
  const solved = result.accelerations;
  if (!Array.isArray(solved)) {
    return { accelerationsNote: `No closed form for the accelerations: ${solved.reason}. The mass-matrix form and the code export hold the full equations.` };
  }
  return { accelerations: solved.map(({ coordinate, latex }) => ({ coordinate, latex: `${symbolLatex(coordinate, 2)} = ${latex}` })) };
}

/** The system with numbers for the parameters (and its constraints), or the reason there is none. */
export function mechanicalSystemOf(
  model: Model,
  result: Pick<PrintedDerivation, "coordinates" | "massMatrix" | "forcing"> & { constraintRows?: readonly ConstraintRowText[] },
): AnalysisSystem | { reason: string } {
  const symbolic = model.parameters.filter((p) => p.value === undefined).map((p) => p.name);
  if (symbolic.length > 0) return { reason: `Give ${symbolic.join(", ")} a value to find equilibria and linearize.` };
  if ((model.rateConstraints?.length ?? 0) > 0) {
    return {
      reason:
        "Equilibria and the linearization are found for models whose constraints are all position constraints: this one has rate constraints, which limit velocities without limiting positions. Simulate it to study its motion.",
    };
  }
  const positionCount = model.constraints?.length ?? 0;
  const rows = result.constraintRows ?? [];
  if (positionCount > 0 && rows.length !== positionCount) return { reason: "Evaluate the notebook again to find equilibria of its constrained model." };
  return {
    coordinates: result.coordinates,
    coordinateUnits: model.coordinates.map((c) => c.unit),
    inputs: (model.inputs ?? []).map((u) => u.name),
    massMatrix: result.massMatrix,
    forcing: result.forcing,
    parameters: Object.fromEntries(model.parameters.map((p) => [p.name, p.value!])),
    ...(rows.length > 0 ? { constraints: rows.map(({ name, kind, symbol, expr }) => ({ name, kind, symbol, expr })) } : {}),
  };
}

/**
 * A coordinate that appears in neither M nor f (a trolley position, a pan
 * angle; the engine reports them as `freeCoordinates`) leaves every
 * equilibrium one of a continuum; the search reports many copies. Keep one
 * per distinct value of the other coordinates, with the free ones at 0, and
 * round search noise (|q| < 1e-9) to 0. The same holds for a continuum along
 * a rigid mode (a trolley and its hanging load moving together): equilibria
 * that differ by a combination of the rigid mode shapes are one, shown by the
 * member nearest to all zeros.
 */
export function distinctEquilibria(coordinates: readonly string[], freeCoordinates: readonly string[], found: readonly Equilibrium[]): Equilibrium[] {
  const free = coordinates.map((name) => freeCoordinates.includes(name));
  const seen = new Set<string>();
  const kept: Equilibrium[] = [];
  for (const equilibrium of found) {
    const q = equilibrium.q.map((value, i) => (free[i] || Math.abs(value) < 1e-9 ? 0 : value));
    const key = q.map((value) => value.toFixed(6)).join(",");
    if (seen.has(key)) continue;
    seen.add(key);
    const candidate = { ...equilibrium, q };
    const family = kept.findIndex((other) => sameFamily(other, candidate));
    if (family < 0) kept.push(candidate);
    else if (Math.hypot(...candidate.q) < Math.hypot(...kept[family]!.q)) kept[family] = candidate;
  }
  return kept;
}

/** Whether two equilibria of the same stability differ only along the rigid modes of the first. */
function sameFamily(a: Equilibrium, b: Equilibrium): boolean {
  if (a.isolated !== false || b.isolated !== false || a.stability !== b.stability) return false;
  const rigid = (a.linearization?.modes ?? []).filter((mode) => mode.kind === "rigid").map((mode) => mode.shape);
  if (rigid.length === 0) return false;
  // Gram–Schmidt on the rigid shapes, then the part of the difference outside their span.
  const basis: number[][] = [];
  for (const shape of rigid) {
    const v = [...shape];
    for (const e of basis) {
      const dot = v.reduce((sum, x, i) => sum + x * e[i]!, 0);
      for (let i = 0; i < v.length; i++) v[i]! -= dot * e[i]!;
    }
    const length = Math.hypot(...v);
    if (length > 1e-9) basis.push(v.map((x) => x / length));
  }
  const d = a.q.map((x, i) => x - b.q[i]!);
  for (const e of basis) {
    const dot = d.reduce((sum, x, i) => sum + x * e[i]!, 0);
    for (let i = 0; i < d.length; i++) d[i]! -= dot * e[i]!;
  }
  const scale = 1 + Math.max(...a.q.map(Math.abs), ...b.q.map(Math.abs));
  return Math.max(...d.map(Math.abs)) <= 1e-6 * scale;
}

function equilibriumLabel(names: readonly string[], q: readonly number[], stability: string): string {
  const values = names.map((name, i) => `${name} = ${Number(q[i]!.toPrecision(6))}`).join(", ");
  return `${values} (${stability})`;
}

/** Equilibria, then the linearization about the chosen one, with frequencies and mode shapes. */
export async function analyseSystem(
  runner: EngineRunner,
  system: AnalysisSystem,
  settings: LinearizationSettings,
  freeCoordinates: readonly string[] = [],
  outputs: readonly { name: string; expr: string; unit: string }[] = [],
  coordinateUnits: readonly string[] = [],
): Promise<{ linearization?: NotebookResults["linearization"]; equilibria: (Equilibrium & { label: string })[]; note?: string }> {
  const inputValues = (system.inputs ?? []).map((name) => numberOrZero(settings.inputValues[name]));
  const badInput = (system.inputs ?? []).find((_, i) => Number.isNaN(inputValues[i]!));
  if (badInput) return { equilibria: [], note: `The value of input ${badInput} is not a number.` };
  const found = await runner.run<Equilibrium[]>("equilibria", { system, options: { inputs: inputValues } });
  const equilibria = distinctEquilibria(system.coordinates, freeCoordinates, found).map((e) => ({
    ...e,
    label: equilibriumLabel(system.coordinates, e.q, e.stability),
  }));
  const listed = equilibria.map((e) => ({ label: e.label, values: Object.fromEntries(system.coordinates.map((name, i) => [name, e.q[i]!])) }));
  if (equilibria.length === 0)
    return { equilibria, linearization: { equilibria: listed }, note: "No equilibrium was found for these parameter and input values." };
  const index = Math.min(Math.max(0, settings.equilibriumIndex), equilibria.length - 1);
  const chosen = equilibria[index]!;
  const lin = await runner.run<Linearization>("linearize", { system, point: { q: chosen.q, inputs: inputValues } });
  // The verdict is the equilibrium's own (classifyStability), so the list and the cell always agree.
  // Eigenvalue parts within the rule's tolerance of 0 are shown as 0, as the rule reads them.
  const tolerance = stabilityTolerance(lin.A);
  const rounded = (l: { re: number; im: number }) => ({ re: Math.abs(l.re) <= tolerance ? 0 : l.re, im: Math.abs(l.im) <= tolerance ? 0 : l.im });
  const damped = matchEigenvalues(lin.modes, lin.eigenvalues);
  return {
    equilibria,
    linearization: {
      equilibria: listed,
      selected: {
        index,
        stateNames: lin.state,
        shapeCoordinates: [...system.coordinates],
        ...(lin.basis
          ? {
              constrained: {
                independent: lin.coordinates,
                dependent: system.coordinates.filter((name) => !lin.coordinates.includes(name)),
                multipliers: lin.multipliers,
              },
            }
          : {}),
        inputNames: lin.inputs,
        A: withoutRoundingNoise(lin.A, lin.coordinates.length),
        B: withoutRoundingNoise(lin.B, lin.coordinates.length),
        modes: lin.modes.map((mode, k): ModeView => ({
          kind: mode.kind,
          hertz: mode.hertz,
          growthRate: mode.growthRate,
          shape: mode.shape,
          eigenvalue: damped[k] ? rounded(damped[k]) : null,
        })),
        eigenvalues: lin.eigenvalues.map(rounded),
        stability: chosen.stability,
        stabilityReason: chosen.stabilityReason,
        outputs: outputRows(system, lin, { q: chosen.q, inputs: inputValues }, outputs, coordinateUnits),
      },
    },
  };
}

/**
 * Rows of C and D about the chosen point for every output a frequency
 * response may use: each coordinate, each rate, and each of the model's
 * outputs that reads in coordinates, rates, accelerations and inputs. An
 * output that cannot (it uses a multiplier) is left out with a note.
 */
export function outputRows(
  system: AnalysisSystem,
  lin: Linearization,
  point: { q: number[]; inputs: number[] },
  outputs: readonly { name: string; expr: string; unit: string }[],
  coordinateUnits: readonly string[] = [],
): NonNullable<NonNullable<NotebookResults["linearization"]>["selected"]>["outputs"] {
  const rate = (unit: string) => (unit.trim() === "" ? "1/s" : /^[A-Za-z]+$/.test(unit.trim()) ? `${unit.trim()}/s` : `(${unit.trim()})/s`);
  const choices: (OutputChoice & { unit: string })[] = [
    ...system.coordinates.map((q, i) => ({ name: q, expr: q, unit: coordinateUnits[i] ?? "" })),
    ...system.coordinates.map((q, i) => ({ name: `${q}'`, expr: `${q}'`, unit: rate(coordinateUnits[i] ?? "") })),
  ];
  const notes: string[] = [];
  for (const output of outputs) {
    try {
      stateSpaceOf(system, lin, point, [output]);
      choices.push({ name: output.name, expr: output.expr, unit: output.unit });
    } catch (error) {
      notes.push(`${output.name}: ${error instanceof Error ? error.message : String(error)}`);
    }
  }
  const ss = stateSpaceOf(system, lin, point, choices);
  return { names: ss.outputs, units: choices.map((c) => c.unit), C: ss.C, D: ss.D, notes };
}

/** Relative size below which a matrix entry is rounding noise (a few ulps of the block it sits in). */
export const ROUNDING_NOISE = 1e-12;

/**
 * A state or input matrix with rounding noise written as 0: an entry whose
 * size is at most ROUNDING_NOISE × the largest entry of its block. Blocks
 * follow the units: the rows of q' (the first `n`) apart from the rows of q'',
 * and within those the columns of q, of q' (A) or of each input (B), so a
 * small damping entry is never judged against a large stiffness one.
 *
 * @example withoutRoundingNoise([[0, 1], [-4, 3.67e-15]], 1) // [[0, 1], [-4, 0]] only if 3.67e-15 is noise next to its block
 */
export function withoutRoundingNoise(matrix: readonly (readonly number[])[], n: number): number[][] {
  const columns = matrix[0]?.length ?? 0;
  // A has two column blocks (q, q'); B one block per input column.
  const blockOf = (j: number) => (columns === 2 * n ? (j < n ? 0 : 1) : j);
  const rowBlock = (i: number) => (i < n ? 0 : 1);
  const largest = new Map<string, number>();
  matrix.forEach((row, i) =>
    row.forEach((value, j) => {
      const key = `${rowBlock(i)},${blockOf(j)}`;
      largest.set(key, Math.max(largest.get(key) ?? 0, Math.abs(value)));
    }),
  );
  return matrix.map((row, i) => row.map((value, j) => (Math.abs(value) <= ROUNDING_NOISE * largest.get(`${rowBlock(i)},${blockOf(j)}`)! ? 0 : value)));
}

/** What keeps the energy function from being conserved, in words (deriveModel's condition, spelled out). */
export function energyNotConservedReason(model: Model, derived: Pick<PrintedDerivation, "explicitTime">): string {
  const forced = Object.entries(model.forces ?? {}).filter(([, text]) => text.trim() !== "" && text.trim() !== "0");
  const reasons = [
    ...(derived.explicitTime ? ["the Lagrangian depends on t explicitly"] : []),
    ...(!["", "0"].includes((model.dissipation ?? "").trim()) ? ["the dissipation function removes energy"] : []),
    ...(forced.length > 0 ? [`applied forces act (${forced.map(([coordinate, text]) => `${text.trim()} on ${coordinate}`).join(", ")})`] : []),
  ];
  return reasons.length > 0 ? reasons.join("; ") : "the derivation found a non-conservative term";
}

/** The code-export input for a derivation result. */
export function codeExportInput(model: Model, result: Pick<PrintedDerivation, "coordinates" | "massMatrix" | "forcing">): CodeExportInput {
  return {
    title: model.title,
    coordinates: result.coordinates,
    parameters: model.parameters.map((p) => ({ name: p.name, unit: p.unit, ...(p.value !== undefined ? { value: p.value } : {}) })),
    // A constrained model's multipliers (lambda_<name>, mu_<name>) are arguments after the inputs.
    inputs: [
      ...(model.inputs ?? []).map((u) => u.name),
      ...(model.constraints ?? []).map((c) => multiplierSymbol("position", c.name)),
      ...(model.rateConstraints ?? []).map((c) => multiplierSymbol("rate", c.name)),
    ],
    massMatrix: result.massMatrix,
    forcing: result.forcing,
  };
}

/**
 * Runs the whole evaluation of a model. ModelError (invalid model, unit
 * mismatch) propagates from the worker for the caller to turn into a 422.
 */
export async function evaluateModel(
  runner: EngineRunner,
  model: Model,
  settings: EvaluationSettings,
): Promise<{ result: EvaluationResult; timings: EvaluationTimings }> {
  const started = performance.now();
  // The worker prints the derivation as it leaves the engine: text for M and f, LaTeX of the display forms.
  const derived = await runner.run<PrintedDerivation>("derive", { model });
  const afterDerive = performance.now();

  const equations = derived.equations.map((equation) => ({
    coordinate: equation.coordinate,
    residual: equation.residual,
    latex: `${equation.termLatex} = 0`,
    terms: equation.terms,
  }));
  const conserved = derived.conserved.map((quantity) => ({ name: quantity.name, latex: quantity.latex, reason: quantity.reason }));
  const cyclicMomenta = derived.cyclicMomenta.map((entry) => {
    const p = `p_{${symbolLatex(entry.coordinate, 0)}}`;
    return {
      coordinate: entry.coordinate,
      conserved: entry.conserved,
      rateLatex: `${p} = ${entry.latex.momentum},\\qquad \\dot{${p}} = ${entry.latex.rate}`,
      actedOnBy: entry.actedOnBy,
    };
  });
  const energyNotConserved = derived.conserved.some((quantity) => quantity.name === "energy function") ? undefined : energyNotConservedReason(model, derived);
  const afterLatex = performance.now();

  const constraintRows: ConstraintRowText[] = derived.constraints.map(({ name, kind, symbol, expr }) => ({ name, kind, symbol, expr }));
  const system = mechanicalSystemOf(model, { ...derived, constraintRows });
  const analysis: Awaited<ReturnType<typeof analyseSystem>> =
    "reason" in system
      ? { equilibria: [], note: system.reason }
      : await analyseSystem(runner, system, settings.linearization, derived.freeCoordinates, derived.outputs ?? [], system.coordinateUnits ?? []);
  const afterAnalysis = performance.now();

  const input = codeExportInput(model, derived);
  const code = [];
  for (const language of settings.codeLanguages) {
    const engineLanguage = CODE_LANGUAGE_OF[language];
    const { code: source } = await runner.run<{ code: string }>("exportCode", { input, language: engineLanguage });
    code.push({ language, filename: codeFileName(model.title, engineLanguage), source });
  }
  const finished = performance.now();

  const timings: EvaluationTimings = {
    deriveMs: round(afterDerive - started),
    latexMs: round(afterLatex - afterDerive),
    analysisMs: round(afterAnalysis - afterLatex),
    codeMs: round(finished - afterAnalysis),
    totalMs: round(finished - started),
  };
  const result: EvaluationResult = {
    coordinates: derived.coordinates,
    massMatrix: derived.massMatrix,
    forcing: derived.forcing,
    freeCoordinates: derived.freeCoordinates,
    equations,
    massMatrixLatex: massMatrixLatex(derived),
    ...accelerationsView(derived),
    energyLatex: derived.latex.energy,
    conserved,
    cyclicMomenta,
    ...(energyNotConserved ? { energyNotConserved } : {}),
    ...(analysis.linearization ? { linearization: analysis.linearization } : {}),
    ...(analysis.note ? { linearizationNote: analysis.note } : {}),
    equilibria: analysis.equilibria,
    ...(derived.outputs && derived.outputs.length > 0 ? { outputs: derived.outputs.map(({ name, expr, unit }) => ({ name, expr, unit })) } : {}),
    ...(constraintRows.length > 0 ? { constraintRows } : {}),
    ...(code.length > 0 ? { code } : {}),
    timingMs: timings.totalMs,
  };
  return { result, timings };
}

function round(ms: number): number {
  return Math.round(ms * 100) / 100;
}

/**
 * An evaluation's result linearized about another equilibrium or input: only
 * the equilibrium search and the linearization run; the derivation (M and f)
 * is taken from `base`, so nothing is derived again.
 */
export async function relinearize(
  runner: EngineRunner,
  model: Model,
  base: EvaluationResult,
  settings: LinearizationSettings,
): Promise<{ result: EvaluationResult; timings: Pick<EvaluationTimings, "analysisMs" | "totalMs"> }> {
  const started = performance.now();
  const system = mechanicalSystemOf(model, base);
  const analysis =
    "reason" in system
      ? { equilibria: [], note: system.reason }
      : await analyseSystem(runner, system, settings, base.freeCoordinates ?? [], base.outputs ?? [], system.coordinateUnits ?? []);
  const { linearization: _linearization, linearizationNote: _note, ...rest } = base;
  const result: EvaluationResult = {
    ...rest,
    ...(analysis.linearization ? { linearization: analysis.linearization } : {}),
    ...(analysis.note ? { linearizationNote: analysis.note } : {}),
    equilibria: analysis.equilibria,
  };
  const analysisMs = round(performance.now() - started);
  return { result, timings: { analysisMs, totalMs: analysisMs } };
}
