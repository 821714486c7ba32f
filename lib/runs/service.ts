import "server-only";
import { createHash, randomUUID } from "node:crypto";
import type { Derivation, SimulationRun, StoredFile, StoredTrajectory } from "@/db/schema";
import { createSimulationRun } from "@/db/queries/runs";
import { documentFromContent, modelFromDocument } from "@/lib/evaluation/document-content";
import { engineErrorToAppError } from "@/lib/evaluation/service";
import { normalizeModel } from "@/lib/evaluation/evaluate";
import { env } from "@/lib/env";
import { AppError } from "@/lib/errors";
import { EngineLimitError, type Model } from "@/lib/mechanics";
import { updateRow, type DerivationDocument, type ParametersCell } from "@/lib/notebook/document";
import { explainFit, type WorkerErrorPayload } from "@/lib/simulate";
import { deleteObject, getObjectBytes, putObject } from "@/lib/storage";
import { getSimulationPool } from "@/lib/workers/simulation-pool";
import type { FitTaskInput, FitTaskOutput, SimulateTaskInput, SimulateTaskOutput } from "./tasks";
import type { FitJson } from "./views";
import { INLINE_TRAJECTORY_VALUES, constraintSummaryOf, decimate, decimationStride, storedTrajectoryOf, valueCount } from "./trajectory";

/** Time a worker may spend deriving and compiling before the integration's own clock starts. */
const SETUP_ALLOWANCE_MS = 15_000;
/** Longest overlay series returned by a fit (the measured file may hold 200 000 rows). */
const MAX_OVERLAY_POINTS = 5_000;
/** Output points a server run may produce (a client asks for fewer through the output step). */
export const MAX_RUN_OUTPUT_POINTS = 200_001;

/** A queued job's progress report and cancel signal (lib/jobs), passed on to the worker pool. */
export interface JobWatch {
  onProgress?: (fraction: number) => void;
  signal?: AbortSignal;
}

export interface RunSettings {
  initialCoordinates: Record<string, number>;
  initialRates?: Record<string, number>;
  startTime?: number;
  endTime: number;
  outputStep: number;
  relativeTolerance?: number;
  absoluteTolerance?: number;
  inputs?: Record<string, string>;
  parameters?: Record<string, number>;
  timeLimitMs?: number;
  energyDriftThreshold?: number;
  label?: string;
}

export function documentOf(derivation: Pick<Derivation, "content" | "title">): DerivationDocument {
  return documentFromContent(derivation.content, derivation.title);
}

/** The coordinates (name and unit) a measured file must be read against. */
export function coordinatesOfDocument(document: DerivationDocument): { name: string; unit: string }[] {
  return document.cells.flatMap((cell) =>
    cell.kind === "coordinates" ? cell.rows.filter((row) => row.name.trim() !== "").map((row) => ({ name: row.name.trim(), unit: row.unit.trim() })) : [],
  );
}

/** SHA-256 of the normalised model: which model a run used, whatever the document has become since. */
export function modelHashOf(model: Model): string {
  return createHash("sha256")
    .update(JSON.stringify(normalizeModel(model)))
    .digest("hex");
}

/** A setup problem reported by the worker, as a 422 naming the setting. */
function setupError(surface: "simulation" | "fit", error: WorkerErrorPayload): AppError {
  const field = error.field ?? "_";
  return new AppError(`unprocessable:${surface}`, error.field ? `${error.field}: ${error.message}` : error.message, {
    fieldErrors: { [field]: [error.message] },
    details: { code: error.code, field: error.field },
  });
}

function poolError(surface: "simulation" | "fit", error: unknown, limitMs: number): unknown {
  if (error instanceof EngineLimitError && error.limit === "cancelled") return new AppError("conflict:job", "The job was cancelled.");
  if (error instanceof EngineLimitError && error.limit === "time") {
    return new AppError(
      `unprocessable:${surface}`,
      `The ${surface === "fit" ? "fit" : "simulation"} was stopped after ${Math.round(limitMs / 1000)} s while deriving or compiling the model.`,
      {
        details: { code: "time_limit" },
      },
    );
  }
  if (error instanceof EngineLimitError && error.limit === "memory") {
    return new AppError(`unprocessable:${surface}`, "The job ran out of memory and was stopped; use a coarser output step or a shorter time span.", {
      details: { code: "memory" },
    });
  }
  return engineErrorToAppError(error);
}

/** Where a large run's trajectory is stored. */
export function trajectoryKey(derivationId: string, runId: string): string {
  return `derivations/${derivationId}/runs/${runId}/trajectory.json`;
}

/**
 * Runs a simulation of the derivation's current model in the simulation pool
 * and stores it. A numerical failure (singular mass matrix, step-size
 * underflow, time limit) is stored too, with the reason, the time reached
 * and the partial trajectory; bad settings are a 422 and store nothing.
 */
export async function runAndStoreSimulation({
  derivation,
  userId,
  settings,
  watch = {},
}: {
  derivation: Derivation;
  userId: string;
  settings: RunSettings;
  watch?: JobWatch;
}): Promise<SimulationRun> {
  const model = modelFromDocument(documentOf(derivation));
  const timeLimitMs = Math.min(settings.timeLimitMs ?? env.SIMULATION_TIME_LIMIT_MS, env.SIMULATION_TIME_LIMIT_MS);
  const { label: _label, energyDriftThreshold, ...integration } = settings;
  const input: SimulateTaskInput = {
    model,
    settings: { ...integration, timeLimitMs, maxOutputPoints: MAX_RUN_OUTPUT_POINTS },
    energyDriftThreshold,
  };
  let output: SimulateTaskOutput;
  try {
    output = await getSimulationPool().run<SimulateTaskOutput>("simulate", input, { timeoutMs: timeLimitMs + SETUP_ALLOWANCE_MS, ...watch });
  } catch (error) {
    throw poolError("simulation", error, timeLimitMs + SETUP_ALLOWANCE_MS);
  }
  if (!output.ok) throw setupError("simulation", output.error);

  const { result, energyCheck, columnUnits } = output;
  const trajectory = storedTrajectoryOf(result);
  const runId = randomUUID();
  const inline = valueCount(trajectory) <= INLINE_TRAJECTORY_VALUES;
  const key = inline ? null : trajectoryKey(derivation.id, runId);
  if (key) await putObject({ key, body: new TextEncoder().encode(JSON.stringify(trajectory)), contentType: "application/json" });
  try {
    return await createSimulationRun({
      run: {
        id: runId,
        derivationId: derivation.id,
        settings: { ...settings, timeLimitMs },
        status: result.status,
        failureReason: result.failure?.reason ?? null,
        failureMessage: result.failure?.message ?? null,
        timeReached: result.timeReached,
        summary: {
          coordinateUnits: Object.fromEntries(model.coordinates.map((c) => [c.name, c.unit])),
          parameterValues: result.parameterValues,
          stats: result.stats,
          energyCheck,
          finalState: finalStateOf(trajectory),
          constraints: constraintSummaryOf(result),
          columnUnits,
        },
        trajectory: inline ? trajectory : null,
        trajectoryKey: key,
        pointCount: trajectory.times.length,
        energyDrift: energyCheck ? energyCheck.relativeDrift : null,
        modelHash: modelHashOf(model),
        createdById: userId,
      },
    });
  } catch (error) {
    // Nothing half-stored: without its row the object would be an orphan.
    if (key) await deleteObject({ key }).catch((cleanup) => console.error("[holonomy] could not remove an orphaned trajectory:", cleanup));
    throw error;
  }
}

function finalStateOf(trajectory: StoredTrajectory): Record<string, number> | null {
  const last = trajectory.times.length - 1;
  if (last < 0) return null;
  const state: Record<string, number> = { t: trajectory.times[last]! };
  trajectory.coordinateNames.forEach((name, i) => {
    state[name] = trajectory.coordinates[i]![last]!;
    state[`${name}'`] = trajectory.rates[i]![last]!;
  });
  return state;
}

/** The stored trajectory of a run, from its row or from object storage. */
export async function trajectoryOfRun(run: Pick<SimulationRun, "trajectory" | "trajectoryKey">): Promise<StoredTrajectory | null> {
  if (run.trajectory) return run.trajectory;
  if (!run.trajectoryKey) return null;
  const bytes = await getObjectBytes({ key: run.trajectoryKey });
  if (!bytes) {
    console.error("[holonomy] a run's trajectory object is missing:", run.trajectoryKey);
    return null;
  }
  return JSON.parse(new TextDecoder().decode(bytes)) as StoredTrajectory;
}

export interface FitRequest {
  file: StoredFile;
  parameters: { name: string; initial?: number; min?: number; max?: number }[];
  settings?: FitTaskInput["settings"];
  coordinateScales?: Record<string, number>;
  maxIterations?: number;
  timeLimitMs?: number;
}

/** Fits parameters of the derivation's current model to a stored measured file, in the simulation pool. */
export async function fitToMeasuredFile({
  derivation,
  request,
  watch = {},
}: {
  derivation: Derivation;
  request: FitRequest;
  watch?: JobWatch;
}): Promise<Omit<FitJson, "applied">> {
  if (request.file.kind !== "measured_csv") {
    throw new AppError("unprocessable:fit", "Choose a measured-data CSV to fit to.", { fieldErrors: { fileId: ["Not a measured-data file."] } });
  }
  const document = documentOf(derivation);
  const model = modelFromDocument(document);
  const bytes = await getObjectBytes({ key: request.file.objectKey });
  if (!bytes) throw new AppError("not_found:file", "The measured file's data is missing from storage.");
  const timeLimitMs = Math.min(request.timeLimitMs ?? Math.min(30_000, env.FIT_TIME_LIMIT_MS), env.FIT_TIME_LIMIT_MS);
  const input: FitTaskInput = {
    model,
    csvText: new TextDecoder().decode(bytes),
    parameters: request.parameters,
    settings: request.settings,
    coordinateScales: request.coordinateScales,
    maxIterations: request.maxIterations,
    timeLimitMs,
  };
  let output: FitTaskOutput;
  try {
    output = await getSimulationPool().run<FitTaskOutput>("fit", input, { timeoutMs: timeLimitMs + SETUP_ALLOWANCE_MS, ...watch });
  } catch (error) {
    throw poolError("fit", error, timeLimitMs + SETUP_ALLOWANCE_MS);
  }
  if (!output.ok) throw setupError("fit", output.error);

  const { result, measured } = output;
  const units = new Map(model.parameters.map((p) => [p.name, p.unit]));
  const stride = decimationStride(measured.times.length, MAX_OVERLAY_POINTS);
  return {
    fit: {
      status: result.status,
      parameters: result.parameters.map((p) => ({ ...p, unit: units.get(p.name) ?? null })),
      residualRms: result.residualRms,
      residualRmsByCoordinate: result.residualRmsByCoordinate,
      observations: result.observations,
      iterations: result.iterations,
      simulations: result.simulations,
      covariance: result.covariance,
      notIdentifiable: result.notIdentifiable,
      recordMoves: result.recordMoves,
      wallTimeMs: result.wallTimeMs,
      // The same sentences for every client: how it ended, residuals with units, what the data cannot determine.
      report: explainFit(result, {
        coordinateUnits: Object.fromEntries(measured.series.map((series) => [series.coordinate, series.targetUnit])),
        inputs: (model.inputs ?? []).map((input) => input.name),
        appliedInputs: Object.entries(request.settings?.inputs ?? {})
          .filter(([, expr]) => String(expr).trim() !== "")
          .map(([name]) => name),
      }),
    },
    overlay: {
      fileId: request.file.id,
      stride,
      times: decimate(measured.times, stride),
      series: measured.series.map((series) => ({
        coordinate: series.coordinate,
        unit: series.targetUnit,
        measured: decimate(series.values, stride),
        fitted: decimate(result.fitted.find((f) => f.coordinate === series.coordinate)?.values ?? new Float64Array(0), stride),
      })),
    },
  };
}

/**
 * The document with new values in the Parameters cell, through the document's
 * own row operation. Values are written with 8 significant digits.
 */
export function withParameterValues(document: DerivationDocument, values: Record<string, number>): DerivationDocument {
  let next = document;
  const missing: string[] = [];
  for (const [name, value] of Object.entries(values)) {
    let found = false;
    for (const cell of next.cells) {
      if (cell.kind !== "parameters") continue;
      const row = (cell as ParametersCell).rows.find((r) => r.name.trim() === name);
      if (!row) continue;
      next = updateRow(next, cell.id, row.id, { value: String(Number(value.toPrecision(8))) });
      found = true;
      break;
    }
    if (!found) missing.push(name);
  }
  if (missing.length > 0) {
    throw new AppError("unprocessable:fit", `Not in the Parameters cell: ${missing.join(", ")}.`, {
      fieldErrors: Object.fromEntries(missing.map((name) => [`values.${name}`, ["No parameter of this name."]])),
    });
  }
  return next;
}
