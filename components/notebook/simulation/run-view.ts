/**
 * One simulation as the results view shows it, whether it ran in this
 * browser's worker or was stored by the server; and its CSV.
 */
import type { SmallOscillationReport } from "@/lib/simulate/checks";
import type { SimulationFailure } from "@/lib/simulate/integrate";

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
  /** Present when the energy function is conserved: only then is its drift a check. */
  energyCheck: { relativeDrift: number; threshold: number; warning: boolean } | null;
  smallOscillation?: SmallOscillationReport | null;
  points?: { xName: string; yName: string; x: ArrayLike<number>; y: ArrayLike<number> }[];
  pointsError?: string | null;
  parameterValues?: Record<string, number>;
  rhsEvaluations?: number;
  wallTimeMs?: number;
}

/** Plain-language reasons for a failed integration. */
export const FAILURE_LABELS: Record<string, string> = {
  step_size_underflow: "Step size underflow",
  singular_mass_matrix: "Singular mass matrix",
  time_limit: "Time limit reached",
  cancelled: "Cancelled",
  non_finite_state: "The state became infinite or not a number",
  max_steps: "Too many integrator steps",
};

/** The trajectory as CSV: t, each coordinate, each rate, and the energy function when known. */
export function trajectoryCsv(run: RunDisplay): string {
  const header = ["t", ...run.coordinateNames, ...run.coordinateNames.map((q) => `${q}'`), ...(run.energy ? ["energy"] : [])];
  const lines = [header.join(",")];
  for (let k = 0; k < run.times.length; k++) {
    const row = [run.times[k]!, ...run.coordinates.map((c) => c[k]!), ...run.rates.map((r) => r[k]!), ...(run.energy ? [run.energy[k]!] : [])];
    lines.push(row.map((v) => String(v)).join(","));
  }
  return `${lines.join("\n")}\n`;
}

/** A stored run as the runs API returns it (see lib/runs/views.ts). */
export interface StoredRunJson {
  id: string;
  status: "completed" | "failed";
  failure: { reason: string; message: string; timeReached: number } | null;
  timeReached: number;
  pointCount: number;
  energyDrift: number | null;
  settings: Record<string, unknown> & { label?: string };
  summary: { parameterValues?: Record<string, number>; energyCheck?: { relativeDrift: number; threshold: number; warning: boolean } | null; stats?: { rhsEvaluations: number; wallTimeMs: number } } | null;
  createdBy: { id: string; name: string | null } | null;
  createdAt: string;
  trajectory?: { coordinateNames: string[]; times: number[]; coordinates: number[][]; rates: number[][]; energy: number[] | null } | null;
}

export function displayOfStoredRun(run: StoredRunJson): RunDisplay | null {
  if (!run.trajectory) return null;
  const t = run.trajectory;
  const when = new Date(run.createdAt).toLocaleString("en-GB", { dateStyle: "medium", timeStyle: "short" });
  return {
    label: `Server run ${run.settings.label ? `“${run.settings.label}” ` : ""}by ${run.createdBy?.name ?? "a teammate"}, ${when}`,
    source: "server",
    status: run.status,
    failure: run.failure ? { reason: run.failure.reason as SimulationFailure["reason"], message: run.failure.message, timeReached: run.failure.timeReached } : null,
    timeReached: run.timeReached,
    coordinateNames: t.coordinateNames,
    times: t.times,
    coordinates: t.coordinates,
    rates: t.rates,
    energy: t.energy,
    energyCheck: run.summary?.energyCheck ?? null,
    parameterValues: run.summary?.parameterValues,
    rhsEvaluations: run.summary?.stats?.rhsEvaluations,
    wallTimeMs: run.summary?.stats?.wallTimeMs,
  };
}
