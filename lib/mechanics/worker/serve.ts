import { parentPort } from "node:worker_threads";
import { serializeError, type TaskRequest, type TaskResponse } from "./protocol";
import { ENGINE_TASKS, type EngineTask } from "./tasks";

/**
 * Answers task requests from the pool on the parent port with the given
 * tasks. engine-worker.ts calls it with the engine's tasks; a worker entry of
 * your own (extra tasks, tests) can call it with more.
 */
export function serveEngineTasks(tasks: Readonly<Record<string, EngineTask>> = ENGINE_TASKS): void {
  const port = parentPort;
  if (!port) throw new Error("serveEngineTasks must run in a worker thread");
  port.on("message", (request: TaskRequest) => {
    let response: TaskResponse;
    try {
      const handler = Object.prototype.hasOwnProperty.call(tasks, request.task) ? tasks[request.task] : undefined;
      if (!handler) throw new Error(`unknown engine task "${request.task}"`);
      const progress = (fraction: number) => port.postMessage({ id: request.id, progress: Math.min(1, Math.max(0, fraction)) } satisfies TaskResponse);
      response = { id: request.id, ok: true, result: handler(JSON.parse(request.payload), { progress }) };
    } catch (error) {
      response = { id: request.id, ok: false, error: serializeError(error) };
    }
    port.postMessage(response);
  });
}
