/**
 * Worker-thread entry of the server's simulation pool (lib/workers/simulation-pool.ts),
 * served with the engine pool's protocol. `npm run build:workers` bundles it to
 * dist/workers/simulation-worker.mjs.
 */
import { serveEngineTasks } from "../mechanics/worker";
import { SIMULATION_TASKS } from "./tasks";

serveEngineTasks(SIMULATION_TASKS);
