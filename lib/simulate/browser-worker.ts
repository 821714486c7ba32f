/**
 * Web Worker entry for interactive simulation and fitting in the notebook:
 *
 *     const worker = new Worker(new URL("@/lib/simulate/browser-worker.ts", import.meta.url), { type: "module" });
 *     worker.postMessage({ type: "start", id, job });
 *
 * Only `postMessage` and `onmessage` of the worker scope are used, so the
 * module runs in any dedicated worker; see worker-protocol.ts for the messages.
 */
import { createWorkerHandler, type WorkerRequest, type WorkerResponse } from "./worker-protocol";

interface DedicatedWorkerScope {
  postMessage(message: WorkerResponse, transfer?: ArrayBuffer[]): void;
  onmessage: ((event: { data: WorkerRequest }) => void) | null;
}

// The project compiles against the DOM library, whose `self` is a Window;
// inside a dedicated worker it is the worker scope described above.
const scope = globalThis as unknown as DedicatedWorkerScope;
const handle = createWorkerHandler((message, transfer) => scope.postMessage(message, transfer ?? []));
scope.onmessage = (event) => {
  void handle(event.data);
};
