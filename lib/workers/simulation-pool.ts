import "server-only";
import path from "node:path";
import { EnginePool } from "@/lib/mechanics/worker";
import { lazyPool } from "@/lib/workers/lazy-pool";

/** The bundled simulation worker (`npm run build:workers`), resolved from the project folder. */
export function simulationWorkerFile(): string {
  return path.join(process.cwd(), "dist", "workers", "simulation-worker.mjs");
}

/** Memory caps per simulation thread: a run keeps its whole trajectory, a fit one measured file. */
const SIMULATION_RESOURCE_LIMITS = { maxOldGenerationSizeMb: 384, maxYoungGenerationSizeMb: 48, stackSizeMb: 4 };

// One pool beside the engine's (lib/workers/engine-pool.ts): a long simulation must not hold up derivations.
const simulationPool = lazyPool({
  key: "holonomySimulationPool",
  name: "simulation",
  code: "unavailable:simulation",
  message: "Simulation is not available right now.",
  create: () =>
    new EnginePool({
      workerFile: simulationWorkerFile(),
      size: 1,
      // Each task passes its own limit; this is the fallback.
      taskTimeoutMs: 30_000,
      resourceLimits: SIMULATION_RESOURCE_LIMITS,
      // A fit carries the measured CSV (up to the upload limit) as text.
      maxInputLength: 12 * 1024 * 1024,
      maxQueue: 20,
    }),
});

export const getSimulationPool = simulationPool.get;
/** Stops the pool's threads (tests and scripts). */
export const closeSimulationPool = simulationPool.close;
