// The engine's worker-thread entry (Node only: node:worker_threads), apart from
// `@/lib/mechanics` so that nothing else that imports the engine needs Node.
// The server's pools (lib/workers) use EnginePool; a worker bundle's entry calls
// serveEngineTasks, with ENGINE_TASKS and tasks of its own.
export { EnginePool, DEFAULT_RESOURCE_LIMITS } from "./pool";
export type { EnginePoolOptions } from "./pool";
export { serveEngineTasks } from "./serve";
export { ENGINE_TASKS } from "./tasks";
export type { EngineTask, EngineTaskContext } from "./tasks";
