import "server-only";
import { EnginePool } from "@/lib/mechanics/worker/pool";
import { AppError } from "@/lib/errors";
import { engineWorkerFile } from "./worker-file";

// One pool per server process, created on the first evaluation and kept on
// globalThis so development reloads reuse its threads instead of leaking them.
const globalForEngine = globalThis as unknown as { holonomyEnginePool?: EnginePool };

/** The server's engine pool (worker threads running dist/workers/engine-worker.mjs). */
export function getEnginePool(): EnginePool {
  if (!globalForEngine.holonomyEnginePool) {
    try {
      globalForEngine.holonomyEnginePool = new EnginePool({ workerFile: engineWorkerFile(), taskTimeoutMs: 20_000 });
    } catch (error) {
      console.error("[holonomy] engine pool could not start:", error instanceof Error ? error.message : error);
      throw new AppError("unavailable:engine", "The derivation engine is not available right now.", { cause: error });
    }
  }
  return globalForEngine.holonomyEnginePool;
}

/** Stops the pool's threads (tests and scripts). */
export async function closeEnginePool(): Promise<void> {
  const pool = globalForEngine.holonomyEnginePool;
  globalForEngine.holonomyEnginePool = undefined;
  await pool?.close();
}
