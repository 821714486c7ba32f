/**
 * Worker-thread entry of the engine pool (pool.ts): serves the named tasks of
 * tasks.ts. `npm run build:workers` bundles this file to
 * dist/workers/engine-worker.mjs, the file the pool loads (worker threads do
 * not run TypeScript, in development as in production).
 */
import { serveEngineTasks } from "./serve";

serveEngineTasks();
