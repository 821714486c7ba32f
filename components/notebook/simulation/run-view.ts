/**
 * One simulation as the results view shows it, whether it ran in this
 * browser's worker or was stored by the server.
 */
import type { SmallOscillationReport, SimulationFailure } from "@/lib/simulate";
import type { RunJson } from "@/lib/runs/views";
import type { ConstraintReport, OutputSeries, ExtraColumnUnits } from "@/lib/simulate";

export interface RunDisplay {
  label: string;
  source: "browser" | "server";
  status: "completed" | "failed";
  failure: SimulationFailure | null;
  timeReached: number;
  coordinateNames: readonly string[];
  times: ArrayLike<number>;
  coordinates: ArrayLike<number>[];
  rates: ArrayLike<number>[];
  energy: ArrayLike<number> | null;
  /** Each coordinate's unit, for the CSV header (a coordinate without one is dimensionless). */
  coordinateUnits: Readonly<Record<string, string>>;
  /** Present when the energy function is conserved: only then is its drift a check. */
  energyCheck: { relativeDrift: number; threshold: number; warning: boolean } | null;
  smallOscillation?: SmallOscillationReport | null;
  points?: { xName: string; yName: string; x: ArrayLike<number>; y: ArrayLike<number> }[];
  pointsError?: string | null;
  parameterValues?: Record<string, number>;
  /** How the run held its constraints, with the multipliers; null or absent without constraints. */
  constraints?: ConstraintReport | null;
  /** The model's outputs with their peaks. */
  outputs?: OutputSeries[];
  /** Units of the multiplier and residual columns of the CSV. */
  columnUnits?: ExtraColumnUnits;
  rhsEvaluations?: number;
  wallTimeMs?: number;
}

/** Plain-language reasons for a failed integration. */
export const FAILURE_LABELS: Record<string, string> = {
  step_size_underflow: "Step size underflow",
  singular_mass_matrix: "Singular mass matrix",
  singular_constraints: "Constraints not independent",
  time_limit: "Time limit reached",
  cancelled: "Cancelled",
  non_finite_state: "The state became infinite or not a number",
  max_steps: "Too many integrator steps",
};

export function displayOfStoredRun(run: RunJson): RunDisplay | null {
  if (!run.trajectory) return null;
  const t = run.trajectory;
  const when = new Date(run.createdAt).toLocaleString("en-GB", { dateStyle: "medium", timeStyle: "short" });
  return {
    label: `Server run ${run.settings.label ? `“${run.settings.label}” ` : ""}by ${run.createdBy?.name ?? "a teammate"}, ${when}`,
    source: "server",
    status: run.status,
    failure: run.failure
      ? { reason: run.failure.reason as SimulationFailure["reason"], message: run.failure.message, timeReached: run.failure.timeReached }
      : null,
    timeReached: run.timeReached,
    coordinateNames: t.coordinateNames,
    times: t.times,
    coordinates: t.coordinates,
    rates: t.rates,
    energy: t.energy,
    coordinateUnits: run.summary?.coordinateUnits ?? {},
    energyCheck: run.summary?.energyCheck ?? null,
    parameterValues: run.summary?.parameterValues,
    constraints: constraintsOfStoredRun(run),
    outputs: (t.outputs ?? []).map((o) => ({ name: o.name, unit: o.unit, values: Float64Array.from(o.values), peak: o.peak })),
    columnUnits: run.summary?.columnUnits ?? {},
    rhsEvaluations: run.summary?.stats?.rhsEvaluations,
    wallTimeMs: run.summary?.stats?.wallTimeMs,
  };
}

/**
 * The constraint report of a stored run: its series from the trajectory, the
 * rest (projection notice, largest correction, method) from the summary.
 * Null for a run without constraints or one stored before they were kept.
 */
function constraintsOfStoredRun(run: RunJson): ConstraintReport | null {
  const series = run.trajectory?.constraints;
  const summary = run.summary?.constraints;
  if (!series || !summary) return null;
  return {
    names: series.names,
    kinds: summary.kinds,
    multiplierNames: series.multiplierNames,
    multipliers: series.multipliers.map((column) => Float64Array.from(column)),
    residuals: series.residuals.map((column) => Float64Array.from(column)),
    rateResiduals: series.rateResiduals.map((column) => Float64Array.from(column)),
    maxResidual: summary.maxResidual,
    initialProjection: summary.initialProjection,
    largestCorrection: summary.largestCorrection,
    method: summary.method,
    explicitTime: summary.explicitTime,
  };
}
