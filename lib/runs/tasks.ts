/**
 * Tasks of the server's simulation worker (simulation-worker.ts): derive the
 * model, build the first-order system and integrate or fit, all inside one
 * worker thread so the pool's time and memory limits cover the whole job.
 * Framework-free: no Next.js, no database, no storage.
 *
 * Problems with the settings or the measured data come back as a result
 * (`{ ok: false, error }`) with the library's code and field, so the route can
 * answer 422 precisely; model errors are thrown and cross the thread boundary
 * as the engine's typed errors.
 */
import { deriveModel, type Model, validateModel } from "../mechanics";
import {
  energyDrift,
  type EnergyDriftReport,
  FitError,
  MeasuredDataError,
  SimulationSetupError,
  fitParameters,
  type FitParameter,
  type FitResult,
  integrate,
  type SimulationResult,
  parseMeasuredCsv,
  systemFromDerivation,
  errorPayload,
  type SimulationSettingsMessage,
  type WorkerErrorPayload,
} from "../simulate";
import type { EngineTaskContext } from "../mechanics/worker";
import { studyRunTask } from "@/lib/study/task";
import { constraintColumnUnits } from "./column-units";

/** The fit's iteration budget when the request names none (the fitter's own default), for progress. */
const DEFAULT_FIT_ITERATIONS = 50;

export type TaskFailure = { ok: false; error: WorkerErrorPayload };

export interface SimulateTaskInput {
  model: unknown;
  settings: SimulationSettingsMessage;
  energyDriftThreshold?: number;
}

export type SimulateTaskOutput =
  | {
      ok: true;
      result: SimulationResult;
      energyCheck: Omit<EnergyDriftReport, "series"> | null;
      /** Units of the multiplier and residual columns (empty without constraints). */
      columnUnits: ReturnType<typeof constraintColumnUnits>;
    }
  | TaskFailure;

export interface FitTaskInput {
  model: unknown;
  csvText: string;
  parameters: FitParameter[];
  settings?: Partial<Omit<SimulationSettingsMessage, "startTime" | "endTime" | "outputStep" | "outputTimes" | "timeLimitMs">>;
  coordinateScales?: Record<string, number>;
  maxIterations?: number;
  timeLimitMs: number;
}

export type FitTaskOutput =
  | { ok: true; result: FitResult; measured: { times: Float64Array; series: { coordinate: string; unit: string; targetUnit: string; values: Float64Array }[] } }
  | TaskFailure;

function failure(error: unknown): TaskFailure {
  if (error instanceof SimulationSetupError || error instanceof FitError || error instanceof MeasuredDataError) {
    return { ok: false, error: errorPayload(error) };
  }
  throw error;
}

export function simulateTask(payload: unknown, context?: EngineTaskContext): SimulateTaskOutput {
  const { model: raw, settings, energyDriftThreshold } = payload as SimulateTaskInput;
  // The same path as the browser's worker: the mass-matrix form carries the constraints and outputs, so a
  // constrained model is integrated with its multipliers and its outputs are evaluated along the run.
  const model: Model = validateModel(raw);
  const derived = deriveModel(model);
  const system = systemFromDerivation(model, derived);
  const columnUnits = constraintColumnUnits(model, derived.constraints ?? []);
  try {
    const result = integrate(system, {
      ...settings,
      ...(context ? { onProgress: ({ fraction }) => context.progress(fraction), progressIntervalMs: 250 } : {}),
    });
    let energyCheck: Omit<EnergyDriftReport, "series"> | null = null;
    if (result.energy && system.energyConserved) {
      const { series: _series, ...report } = energyDrift(result.energy, { threshold: energyDriftThreshold });
      energyCheck = report;
    }
    return { ok: true, result, energyCheck, columnUnits };
  } catch (error) {
    return failure(error);
  }
}

export function fitTask(payload: unknown, context?: EngineTaskContext): FitTaskOutput {
  const input = payload as FitTaskInput;
  const validated = validateModel(input.model);
  const system = systemFromDerivation(validated, deriveModel(validated));
  try {
    const measured = parseMeasuredCsv(input.csvText, { coordinates: validated.coordinates });
    const result = fitParameters({
      system,
      measured,
      parameters: input.parameters,
      settings: input.settings,
      coordinateScales: input.coordinateScales,
      maxIterations: input.maxIterations,
      timeLimitMs: input.timeLimitMs,
      // A fit's length is not known ahead; its iterations against the limit are the honest measure.
      onProgress: context ? ({ iteration }) => context.progress(Math.min(0.95, iteration / (input.maxIterations ?? DEFAULT_FIT_ITERATIONS))) : undefined,
    });
    return {
      ok: true,
      result,
      measured: {
        times: measured.times,
        series: measured.series.map((s) => ({ coordinate: s.coordinate, unit: s.unit, targetUnit: s.targetUnit, values: s.values })),
      },
    };
  } catch (error) {
    return failure(error);
  }
}

/** `studyRun`: one run of a parameter study (lib/study/task.ts), its model derived once per thread. */
export const SIMULATION_TASKS = { simulate: simulateTask, fit: fitTask, studyRun: studyRunTask };
