/**
 * The simulation worker's task for one run of a study (served beside
 * `simulate` and `fit` by lib/runs/simulation-worker.ts). The model is derived
 * and compiled once per worker thread and kept by the key the caller computed
 * (a hash of the model), so a batch of runs pays for the derivation once; the
 * thread returns the run's summary, never its trajectory.
 *
 * Server-side entry (it reaches the engine's computer algebra): the notebook
 * imports `@/lib/study`, never this file.
 */
import { deriveModel, validateModel, type Model } from "@/lib/mechanics";
import { SimulationSetupError, errorPayload, integrate, systemFromDerivation, type MechanicalSystem, type WorkerErrorPayload } from "@/lib/simulate";
import { outputTimesOf } from "./parse";
import { summarizeRun } from "./summary";
import type { RunSummary, WatchSpec } from "./types";

export interface StudyRunSettings {
  initialCoordinates: Record<string, number>;
  initialRates: Record<string, number>;
  inputs: Record<string, string>;
  parameters: Record<string, number>;
  startTime: number;
  endTime: number;
  outputStep: number;
  tolerance: number;
  timeLimitMs: number;
}

export interface StudyRunTaskInput {
  /** Identifies the model in the thread's cache (the caller's hash of it). */
  modelKey: string;
  model: unknown;
  watch: WatchSpec[];
  settings: StudyRunSettings;
}

export type StudyRunTaskOutput =
  | { ok: true; summary: RunSummary; multiplierUnits: Record<string, string> }
  /** Settings the simulator refused for this run (a bad input expression, say): the run fails, the study goes on. */
  | { ok: false; error: WorkerErrorPayload };

interface Prepared {
  system: MechanicalSystem;
  multiplierUnits: Record<string, string>;
}

/** Models kept per thread: a worker seldom alternates between more than two studies. */
const CACHE_SIZE = 2;
const prepared = new Map<string, Prepared>();

function prepare(key: string, raw: unknown): Prepared {
  const hit = prepared.get(key);
  if (hit) return hit;
  const model: Model = validateModel(raw);
  const derived = deriveModel(model);
  const multiplierUnits: Record<string, string> = {};
  for (const constraint of derived.constraints ?? []) {
    // The engine writes `kg*m/s^2 (N)`: the named unit when there is one, as the trajectory CSV does.
    if (constraint.unit) multiplierUnits[constraint.symbol] = /\(([^)]+)\)$/.exec(constraint.unit)?.[1] ?? constraint.unit;
  }
  const entry = { system: systemFromDerivation(model, derived), multiplierUnits };
  if (prepared.size >= CACHE_SIZE) prepared.delete(prepared.keys().next().value!);
  prepared.set(key, entry);
  return entry;
}

export function studyRunTask(payload: unknown): StudyRunTaskOutput {
  const { modelKey, model, watch, settings } = payload as StudyRunTaskInput;
  const { system, multiplierUnits } = prepare(modelKey, model);
  const outputTimes = outputTimesOf(settings);
  try {
    const result = integrate(system, {
      initialCoordinates: settings.initialCoordinates,
      initialRates: settings.initialRates,
      inputs: settings.inputs,
      parameters: settings.parameters,
      startTime: settings.startTime,
      endTime: settings.endTime,
      outputTimes,
      relativeTolerance: settings.tolerance,
      // Two decades below the relative tolerance, as the simulation cell does.
      absoluteTolerance: Math.max(1e-16, settings.tolerance * 1e-2),
      timeLimitMs: settings.timeLimitMs,
    });
    const summary = summarizeRun(result, watch, { outputCount: outputTimes.length, energyConserved: system.energyConserved === true });
    return { ok: true, summary, multiplierUnits };
  } catch (error) {
    if (error instanceof SimulationSetupError) return { ok: false, error: errorPayload(error) };
    throw error;
  }
}
