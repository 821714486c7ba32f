/** Messages between the simulation cell and its Web Worker (simulation.worker.ts). */
import type { SmallOscillationReport, SimulationSettingsMessage, WorkerErrorPayload, WorkerResponse } from "@/lib/simulate";
import type { ExtraColumnUnits } from "@/lib/simulate";

export interface ModelSimulationJob {
  /** The model file of the document, validated and derived inside the worker. */
  model: unknown;
  settings: SimulationSettingsMessage;
  /** Definition pairs drawn as the mechanism's points. */
  points: { x: string; y: string }[];
  energyDriftThreshold?: number;
  /** A mode of the linearization to compare a small swing against: frequency in rad/s, its damped eigenvalue, the coordinate to time. */
  smallOscillation?: {
    expectedFrequency: number;
    equilibrium: Record<string, number>;
    modeShape: number[];
    coordinate?: string;
    eigenvalue?: { re: number; im: number };
  } | null;
}

export type ModelSimulationRequest = { type: "start"; id: string; job: ModelSimulationJob } | { type: "cancel"; id: string };

export interface PointTrack {
  xName: string;
  yName: string;
  x: Float64Array;
  y: Float64Array;
}

export type SimulationWorkerResponse =
  | Exclude<WorkerResponse, { type: "result" }>
  | (Extract<WorkerResponse, { type: "result" }> & {
      points?: PointTrack[];
      pointsError?: string | null;
      smallOscillation?: SmallOscillationReport | null;
      columnUnits?: ExtraColumnUnits;
    })
  | { type: "error"; id: string; error: WorkerErrorPayload };
