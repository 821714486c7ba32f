/**
 * Worker-thread entry for simulations on the server (the worker pool starts
 * it with `new Worker(...)` and exchanges the messages of worker-protocol.ts).
 * Same handler, and so the same numbers, as the browser worker.
 */
import { parentPort } from "node:worker_threads";
import { createWorkerHandler, type WorkerRequest } from "./worker-protocol";

if (!parentPort) throw new Error("node-worker.ts must run in a worker thread");
const port = parentPort;
const handle = createWorkerHandler((message, transfer) => port.postMessage(message, transfer ?? []));
port.on("message", (request: WorkerRequest) => {
  void handle(request);
});
