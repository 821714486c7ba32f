/**
 * Which mode of the linearization the simulation cell checks with a small
 * swing (lib/simulate/checks.ts checkSmallOscillation), from the results the
 * notebook holds.
 */
import type { NotebookResults } from "@/lib/notebook/results";
import type { ModelSimulationJob } from "./worker-messages";

/**
 * The small-amplitude check for the linearization's lowest mode that swings,
 * when the Parameters cell's values are used and the equilibrium is not
 * unstable (a marginal one, such as a trolley free to roll, still swings).
 * The timed coordinate is one that takes no part in a rigid mode when there
 * is one, so a drift along a free direction does not disturb the crossings.
 */
export function smallOscillationOf(results: NotebookResults | null, coordinates: string[]): ModelSimulationJob["smallOscillation"] {
  const linearization = results?.linearization;
  const selected = linearization?.selected;
  if (!selected || selected.stability === "unstable") return null;
  // A mode without an oscillating eigenvalue of A is overdamped: there is no swing to time.
  const mode = selected.modes.find((m) => m.kind === "oscillating" && m.hertz !== null && m.hertz > 0 && m.eigenvalue !== null && m.eigenvalue.im > 0);
  if (!mode) return null;
  const equilibrium = linearization.equilibria[selected.index]?.values ?? {};
  const modeShape = coordinates.map((_, i) => mode.shape[i] ?? 0);
  if (modeShape.every((v) => v === 0)) return null;
  const rigid = selected.modes.filter((m) => m.kind === "rigid");
  const steady = coordinates.map((_, i) => rigid.every((m) => (m.shape[i] ?? 0) === 0) && modeShape[i] !== 0);
  const candidates = steady.some(Boolean) ? coordinates.map((_, i) => i).filter((i) => steady[i]) : coordinates.map((_, i) => i);
  const timed = candidates.reduce((best, i) => (Math.abs(modeShape[i]!) > Math.abs(modeShape[best]!) ? i : best), candidates[0]!);
  return {
    expectedFrequency: 2 * Math.PI * mode.hertz!,
    equilibrium,
    modeShape,
    coordinate: coordinates[timed]!,
    // Without damping (Re λ written as 0) the swing runs at the natural frequency itself.
    ...(mode.eigenvalue && mode.eigenvalue.re !== 0 ? { eigenvalue: mode.eigenvalue } : {}),
  };
}
