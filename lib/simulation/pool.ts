import "server-only";
import path from "node:path";
import { EnginePool } from "@/lib/mechanics/worker/pool";
import { AppError } from "@/lib/errors";

// One pool per server process beside the engine's (lib/engine/pool.ts): a long
// simulation must not hold up derivations. Kept on globalThis so development
// reloads reuse its threads.
const globalForSimulation = globalThis as unknown as { holonomySimulationPool?: EnginePool };

/** The bundled simulation worker (`npm run build:workers`), resolved from the project folder. */
export function simulationWorkerFile(): string {
  return path.join(process.cwd(), "dist", "workers", "simulation-worker.mjs");
}

/** Memory caps per simulation thread: a run keeps its whole trajectory, a fit one measured file. */
const SIMULATION_RESOURCE_LIMITS = { maxOldGenerationSizeMb: 384, maxYoungGenerationSizeMb: 48, stackSizeMb: 4 };

export function getSimulationPool(): EnginePool {
  if (!globalForSimulation.holonomySimulationPool) {
    try {
      globalForSimulation.holonomySimulationPool = new EnginePool({
        workerFile: simulationWorkerFile(),
        size: 1,
        // Each task passes its own limit; this is the fallback.
        taskTimeoutMs: 30_000,
        resourceLimits: SIMULATION_RESOURCE_LIMITS,
        // A fit carries the measured CSV (up to the upload limit) as text.
        maxInputLength: 12 * 1024 * 1024,
        maxQueue: 20,
      });
    } catch (error) {
      console.error("[holonomy] simulation pool could not start:", error instanceof Error ? error.message : error);
      throw new AppError("unavailable:simulation", "Simulation is not available right now.", { cause: error });
    }
  }
  return globalForSimulation.holonomySimulationPool;
}

/** Stops the pool's threads (tests and scripts). */
export async function closeSimulationPool(): Promise<void> {
  const pool = globalForSimulation.holonomySimulationPool;
  globalForSimulation.holonomySimulationPool = undefined;
  await pool?.close();
}
