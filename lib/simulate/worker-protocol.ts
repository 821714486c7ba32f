import { energyDrift, type EnergyDriftReport } from "./checks";
import { FitError, MeasuredDataError, SimulationSetupError } from "./errors";
import { fitParametersInSlices, type FitOptions, type FitProgress, type FitResult } from "./fit";
import { integrateInSlices, type SimulationProgress, type SimulationResult, type SimulationSettings } from "./integrate";
import type { MeasuredData } from "./measured";
import { systemFromMassMatrixForm, type MassMatrixForm } from "./system";

/**
 * Messages between the notebook page and its simulation Web Worker
 * (components/notebook/simulation/simulation.worker.ts). The server does not
 * use them: its pool runs lib/runs/tasks.ts through the engine pool's protocol.
 * Everything in them survives structured cloning; the system travels as
 * expression strings and is compiled inside the worker from the parsed tree,
 * so no code crosses the boundary.
 *
 * page → worker: `start` (one job, with an id of the caller's choosing), `cancel`.
 * worker → page: `progress` (throttled), then exactly one of `result` or `error`.
 */

/** Simulation settings that can cross a worker boundary (no functions, no signal). */
export type SimulationSettingsMessage = Omit<SimulationSettings, "inputs" | "signal" | "onProgress" | "outputTimes"> & {
  /** Inputs as expressions of t and the parameters. */
  inputs?: Record<string, string>;
  outputTimes?: number[];
};

export type SimulationJob = {
  kind: "simulate";
  system: MassMatrixForm;
  settings: SimulationSettingsMessage;
  /** Warning threshold for the energy drift check (applied when the energy function is conserved). */
  energyDriftThreshold?: number;
};

export type FitJob = {
  kind: "fit";
  system: MassMatrixForm;
  measured: MeasuredData;
  parameters: FitOptions["parameters"];
  settings?: Omit<NonNullable<FitOptions["settings"]>, "inputs"> & { inputs?: Record<string, string> };
  coordinateScales?: Record<string, number>;
  maxIterations?: number;
  timeLimitMs?: number;
};

export type WorkerRequest = { type: "start"; id: string; job: SimulationJob | FitJob } | { type: "cancel"; id: string };

export interface SimulationOutcome {
  kind: "simulate";
  result: SimulationResult;
  /** Present when the system has an energy function and the derivation found it conserved. */
  energyCheck: EnergyDriftReport | null;
}

export interface FitOutcome {
  kind: "fit";
  result: FitResult;
}

export interface WorkerErrorPayload {
  /** `SimulationSetupError`, `FitError`, `MeasuredDataError` or `Error` (unexpected). */
  name: string;
  code: string;
  /** The setting or line the problem is about, when known. */
  field: string | null;
  message: string;
}

export type WorkerResponse =
  | { type: "progress"; id: string; progress: SimulationProgress | FitProgress }
  | { type: "result"; id: string; outcome: SimulationOutcome | FitOutcome }
  | { type: "error"; id: string; error: WorkerErrorPayload };

/** Posts a message, optionally transferring array buffers instead of copying them. */
export type PostMessage = (message: WorkerResponse, transfer?: ArrayBuffer[]) => void;

/**
 * The Web Worker's message handler: feed it every incoming message. Jobs run in slices so that a
 * `cancel` is received while a simulation is under way.
 *
 * @example
 * const handle = createWorkerHandler((message, transfer) => scope.postMessage(message, transfer ?? []));
 * scope.onmessage = (event) => void handle(event.data);
 */
export function createWorkerHandler(post: PostMessage): (request: WorkerRequest) => Promise<void> {
  const running = new Map<string, { aborted: boolean }>();
  return async (request) => {
    if (request.type === "cancel") {
      const signal = running.get(request.id);
      if (signal) signal.aborted = true;
      return;
    }
    const { id, job } = request;
    const signal = { aborted: false };
    running.set(id, signal);
    try {
      const system = systemFromMassMatrixForm(job.system);
      if (job.kind === "simulate") {
        const { outputTimes, ...settings } = job.settings;
        const result = await integrateInSlices(system, {
          ...settings,
          ...(outputTimes ? { outputTimes } : {}),
          signal,
          onProgress: (progress) => post({ type: "progress", id, progress }),
        });
        const energyCheck =
          result.energy && system.energyConserved && !result.constraints?.explicitTime
            ? { ...energyDrift(result.energy, { threshold: job.energyDriftThreshold }) }
            : null;
        const compact = compactResult(result);
        if (energyCheck) energyCheck.series = energyCheck.series.slice();
        post({ type: "result", id, outcome: { kind: "simulate", result: compact, energyCheck } }, buffersOf(compact, energyCheck));
      } else {
        const result = await fitParametersInSlices({
          system,
          measured: job.measured,
          parameters: job.parameters,
          settings: job.settings,
          coordinateScales: job.coordinateScales,
          maxIterations: job.maxIterations,
          timeLimitMs: job.timeLimitMs,
          signal,
          onProgress: (progress) => post({ type: "progress", id, progress }),
        });
        post({ type: "result", id, outcome: { kind: "fit", result } });
      }
    } catch (error) {
      post({ type: "error", id, error: errorPayload(error) });
    } finally {
      running.delete(id);
    }
  };
}

/** Copies each series into its own buffer, sized to the points actually computed, so it can be transferred. */
function compactResult(result: SimulationResult): SimulationResult {
  const { trajectory } = result;
  return {
    ...result,
    trajectory: {
      ...trajectory,
      coordinateNames: [...trajectory.coordinateNames],
      times: trajectory.times.slice(),
      coordinates: trajectory.coordinates.map((c) => c.slice()),
      rates: trajectory.rates.map((r) => r.slice()),
    },
    energy: result.energy ? result.energy.slice() : null,
  };
}

function buffersOf(result: SimulationResult, energyCheck: EnergyDriftReport | null): ArrayBuffer[] {
  const arrays = [result.trajectory.times, ...result.trajectory.coordinates, ...result.trajectory.rates];
  if (result.energy) arrays.push(result.energy);
  if (energyCheck) arrays.push(energyCheck.series);
  return arrays.map((a) => a.buffer as ArrayBuffer);
}

export function errorPayload(error: unknown): WorkerErrorPayload {
  if (error instanceof SimulationSetupError) return { name: error.name, code: error.code, field: error.field, message: error.message };
  if (error instanceof FitError) return { name: error.name, code: error.code, field: null, message: error.message };
  if (error instanceof MeasuredDataError)
    return { name: error.name, code: error.code, field: error.line === null ? null : `line ${error.line}`, message: error.message };
  const message = error instanceof Error ? error.message : String(error);
  return { name: "Error", code: "internal", field: null, message };
}
