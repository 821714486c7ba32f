/**
 * What the runs and fit APIs answer (GET/POST /api/derivations/[id]/runs,
 * …/runs/[runId], …/fit): built by the routes, read by the notebook's
 * simulation cell and measured-data panel. Plain types and pure functions,
 * safe to import on the client.
 */
import type { RunSummary, SimulationRun, SimulationRunStatus, StoredTrajectory } from "@/db/schema";
import type { FitStatus, FittedParameter, NotIdentifiable, FitReport } from "@/lib/simulate";

export type { RunSummary } from "@/db/schema";

/** A stored run as a client sees it; `trajectory` only where one run is asked for. */
export interface RunJson {
  id: string;
  derivationId: string;
  status: SimulationRunStatus;
  failure: { reason: string; message: string; timeReached: number } | null;
  timeReached: number;
  pointCount: number;
  energyDrift: number | null;
  /** The settings the run was asked with (label included). */
  settings: Record<string, unknown> & { label?: string };
  summary: RunSummary;
  modelHash: string;
  createdBy: { id: string; name: string | null } | null;
  /** ISO 8601. */
  createdAt: string;
  trajectory?: StoredTrajectory | null;
}

export function runView(run: Omit<SimulationRun, "trajectory"> & { createdByName?: string | null }, trajectory?: StoredTrajectory | null): RunJson {
  return {
    id: run.id,
    derivationId: run.derivationId,
    status: run.status,
    failure: run.failureReason ? { reason: run.failureReason, message: run.failureMessage ?? "", timeReached: run.timeReached } : null,
    timeReached: run.timeReached,
    pointCount: run.pointCount,
    energyDrift: run.energyDrift,
    settings: run.settings,
    summary: run.summary,
    modelHash: run.modelHash,
    createdBy: run.createdById ? { id: run.createdById, name: run.createdByName ?? null } : null,
    createdAt: run.createdAt.toISOString(),
    ...(trajectory !== undefined ? { trajectory } : {}),
  };
}

/** A fit's answer: the fitted values (with the model's units) and the measured-against-fitted overlay. */
export interface FitJson {
  fit: {
    status: FitStatus;
    parameters: (FittedParameter & { unit: string | null })[];
    residualRms: number;
    residualRmsByCoordinate: Record<string, number>;
    observations: number;
    iterations: number;
    simulations: number;
    covariance: (number | null)[][] | null;
    notIdentifiable: NotIdentifiable[];
    recordMoves: boolean;
    wallTimeMs: number;
    /** How the fit ended, the residuals with their units and what the data cannot determine, in words. */
    report: FitReport;
  };
  overlay: {
    fileId: string;
    /** Every `stride`-th measured row (and the last) is shown. */
    stride: number;
    times: number[];
    series: { coordinate: string; unit: string; measured: number[]; fitted: number[] }[];
  };
  /** Present when the fit was asked to write its values to the Parameters cell. */
  applied?: { updatedAt: string; values: Record<string, number> } | null;
}
