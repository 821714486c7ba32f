import "server-only";
import { EnginePool } from "@/lib/mechanics/worker";
import { lazyPool } from "./lazy-pool";
import { engineWorkerFile } from "./worker-file";

const enginePool = lazyPool({
  key: "holonomyEnginePool",
  name: "engine",
  code: "unavailable:engine",
  message: "The derivation engine is not available right now.",
  create: () => new EnginePool({ workerFile: engineWorkerFile(), taskTimeoutMs: 20_000 }),
});

/** The server's engine pool (worker threads running dist/workers/engine-worker.mjs). */
export const getEnginePool = enginePool.get;
/** Stops the pool's threads (tests and scripts). */
export const closeEnginePool = enginePool.close;
