import { availableParallelism } from "node:os";
import { Worker, type ResourceLimits } from "node:worker_threads";
import { EngineLimitError } from "../errors";
import { DEFAULT_MODEL_LIMITS, type ModelLimits } from "../validate-model";
import { deserializeError, type TaskRequest, type TaskResponse } from "./protocol";

export interface EnginePoolOptions {
  /** The bundled worker entry, dist/workers/engine-worker.mjs (`npm run build:workers`), or another bundle that calls serveEngineTasks. */
  workerFile: string | URL;
  /** Number of worker threads; default min(2, available cores). */
  size?: number;
  /** Per-task time limit in ms; default 10 000. A task past it has its worker terminated. */
  taskTimeoutMs?: number;
  /** Memory caps per worker; defaults 256 MB old generation, 32 MB young generation. */
  resourceLimits?: ResourceLimits;
  /** Largest accepted payload as JSON, in characters; default 1 000 000. */
  maxInputLength?: number;
  /** Deepest accepted nesting of the payload's objects and arrays; default 32. */
  maxInputDepth?: number;
  /** Most tasks waiting for a worker; default 100. */
  maxQueue?: number;
  /** Counts a model or system may have (coordinates, parameters, inputs, definitions), checked before dispatch. */
  modelLimits?: ModelLimits;
  /** Extra checks before dispatch; throw (ideally EngineLimitError or ModelError) to refuse. */
  validateInput?: (task: string, payload: unknown) => void;
  execArgv?: string[];
}

export const DEFAULT_RESOURCE_LIMITS: ResourceLimits = { maxOldGenerationSizeMb: 256, maxYoungGenerationSizeMb: 32, stackSizeMb: 4 };

interface Job {
  id: number;
  task: string;
  payload: string;
  timeoutMs: number;
  resolve: (value: unknown) => void;
  reject: (error: Error) => void;
  onProgress?: (fraction: number) => void;
}

interface Slot {
  worker: Worker;
  job: Job | null;
  timer: NodeJS.Timeout | null;
}

/**
 * A small pool of engine worker threads with a time limit per task, memory
 * caps, a bounded queue and input limits checked before dispatch. A worker
 * that runs out of time or memory is terminated and replaced; the task is
 * rejected with EngineLimitError ("time" or "memory").
 *
 * @example
 * const pool = new EnginePool({ workerFile: new URL("../../../dist/workers/engine-worker.mjs", import.meta.url) });
 * const result = await pool.run("derive", { model });
 */
export class EnginePool {
  private readonly slots: Slot[] = [];
  private readonly queue: Job[] = [];
  private nextId = 1;
  private closed = false;
  private readonly options: Required<Omit<EnginePoolOptions, "validateInput" | "execArgv">> & Pick<EnginePoolOptions, "validateInput" | "execArgv">;

  constructor(options: EnginePoolOptions) {
    this.options = {
      size: Math.max(1, Math.min(2, availableParallelism())),
      taskTimeoutMs: 10_000,
      resourceLimits: DEFAULT_RESOURCE_LIMITS,
      maxInputLength: 1_000_000,
      maxInputDepth: 32,
      maxQueue: 100,
      modelLimits: DEFAULT_MODEL_LIMITS,
      ...options,
    };
    for (let i = 0; i < this.options.size; i++) this.slots.push(this.spawn());
  }

  /** Tasks running and waiting. */
  get stats(): { size: number; busy: number; queued: number } {
    return { size: this.slots.length, busy: this.slots.filter((s) => s.job !== null).length, queued: this.queue.length };
  }

  /**
   * Runs a named engine task. Refuses oversized or too deeply nested input,
   * and a full queue, with EngineLimitError before anything is dispatched.
   */
  run<T = unknown>(
    task: string,
    payload: unknown,
    options: { timeoutMs?: number; onProgress?: (fraction: number) => void; signal?: AbortSignal } = {},
  ): Promise<T> {
    if (this.closed) return Promise.reject(new EngineLimitError("closed", "the engine pool is closed"));
    let text: string;
    try {
      checkDepth(payload, this.options.maxInputDepth);
      text = JSON.stringify(payload ?? null);
      if (text.length > this.options.maxInputLength) {
        throw new EngineLimitError("input_size", `input is ${text.length} characters; the limit is ${this.options.maxInputLength}`);
      }
      checkCounts(payload, this.options.modelLimits);
      this.options.validateInput?.(task, payload);
      if (this.queue.length >= this.options.maxQueue) throw new EngineLimitError("queue", "the engine is busy; try again shortly");
    } catch (error) {
      return Promise.reject(error);
    }
    if (options.signal?.aborted) return Promise.reject(cancelledError());
    return new Promise<T>((resolve, reject) => {
      const job: Job = {
        id: this.nextId++,
        task,
        payload: text,
        timeoutMs: options.timeoutMs ?? this.options.taskTimeoutMs,
        resolve: resolve as (v: unknown) => void,
        reject,
        onProgress: options.onProgress,
      };
      // Cancelling stops a waiting task before it starts and a running one by terminating its worker.
      options.signal?.addEventListener(
        "abort",
        () => {
          const waiting = this.queue.indexOf(job);
          if (waiting >= 0) {
            this.queue.splice(waiting, 1);
            reject(cancelledError());
            return;
          }
          const slot = this.slots.find((s) => s.job === job);
          if (slot) this.replace(slot, cancelledError());
        },
        { once: true },
      );
      this.queue.push(job);
      this.pump();
    });
  }

  /** Terminates all workers; queued and running tasks are rejected. */
  async close(): Promise<void> {
    this.closed = true;
    for (const job of this.queue.splice(0)) job.reject(new EngineLimitError("closed", "the engine pool was closed"));
    await Promise.all(
      this.slots.map(async (slot) => {
        if (slot.timer) clearTimeout(slot.timer);
        slot.job?.reject(new EngineLimitError("closed", "the engine pool was closed"));
        slot.job = null;
        await slot.worker.terminate();
      }),
    );
  }

  private spawn(): Slot {
    const worker = new Worker(this.options.workerFile, { resourceLimits: this.options.resourceLimits, execArgv: this.options.execArgv });
    const slot: Slot = { worker, job: null, timer: null };
    worker.on("message", (response: TaskResponse) => {
      const job = slot.job;
      if (!job || job.id !== response.id) return;
      if ("progress" in response) {
        job.onProgress?.(response.progress);
        return;
      }
      this.finish(slot);
      if (response.ok) job.resolve(response.result);
      else job.reject(deserializeError(response.error));
      this.pump();
    });
    worker.on("error", (error: Error & { code?: string }) => {
      const memory = error.code === "ERR_WORKER_OUT_OF_MEMORY" || /out of memory|heap/i.test(error.message);
      this.replace(
        slot,
        memory ? new EngineLimitError("memory", "the task ran out of memory and was stopped") : new Error(`engine worker failed: ${error.message}`),
      );
    });
    worker.on("exit", (code) => {
      if (!this.closed && this.slots.includes(slot)) this.replace(slot, new Error(`engine worker exited with code ${code}`));
    });
    // Idle workers must not keep the process alive.
    worker.unref();
    return slot;
  }

  private finish(slot: Slot) {
    if (slot.timer) clearTimeout(slot.timer);
    slot.timer = null;
    slot.job = null;
    slot.worker.unref();
  }

  /** Rejects the slot's task, terminates its worker and puts a fresh one in its place. */
  private replace(slot: Slot, reason: Error) {
    const index = this.slots.indexOf(slot);
    if (index < 0) return;
    const job = slot.job;
    this.finish(slot);
    this.slots.splice(index, 1);
    void slot.worker.terminate();
    job?.reject(reason);
    if (!this.closed) {
      this.slots.push(this.spawn());
      this.pump();
    }
  }

  private pump() {
    for (const slot of this.slots) {
      if (this.queue.length === 0) return;
      if (slot.job !== null) continue;
      const job = this.queue.shift()!;
      slot.job = job;
      slot.worker.ref();
      slot.timer = setTimeout(() => {
        this.replace(slot, new EngineLimitError("time", `the task took longer than ${job.timeoutMs} ms and was stopped`));
      }, job.timeoutMs);
      const request: TaskRequest = { id: job.id, task: job.task, payload: job.payload };
      slot.worker.postMessage(request);
    }
  }
}

function cancelledError(): EngineLimitError {
  return new EngineLimitError("cancelled", "the task was cancelled");
}

/** Throws EngineLimitError when objects and arrays nest deeper than `limit` (checked without recursion). */
function checkDepth(value: unknown, limit: number): void {
  const stack: [unknown, number][] = [[value, 0]];
  let visited = 0;
  while (stack.length > 0) {
    const [item, depth] = stack.pop()!;
    if (item === null || typeof item !== "object") continue;
    if (depth >= limit) throw new EngineLimitError("input_depth", `input is nested deeper than ${limit} levels`);
    if (++visited > 1_000_000) throw new EngineLimitError("input_size", "input has too many parts");
    for (const child of Array.isArray(item) ? item : Object.values(item)) stack.push([child, depth + 1]);
  }
}

/**
 * Refuses a model (payload.model) or mass-matrix system (payload.system or
 * payload.input) with more coordinates, parameters, inputs or definitions
 * than the limits allow — the full validation runs in the worker.
 */
function checkCounts(payload: unknown, limits: ModelLimits): void {
  if (payload === null || typeof payload !== "object") return;
  const record = payload as Record<string, unknown>;
  const count = (value: unknown, key: string) => {
    const list = value !== null && typeof value === "object" ? (value as Record<string, unknown>)[key] : undefined;
    return Array.isArray(list) ? list.length : 0;
  };
  for (const key of ["model", "system", "input"]) {
    const part = record[key];
    if (part === undefined) continue;
    const checks: [string, number, number][] = [
      ["coordinates", count(part, "coordinates"), limits.maxCoordinates],
      [
        "parameters",
        key === "system" ? Object.keys(((part as Record<string, unknown>).parameters as object) ?? {}).length : count(part, "parameters"),
        limits.maxParameters,
      ],
      ["inputs", count(part, "inputs"), limits.maxInputs],
      ["definitions", count(part, "definitions"), limits.maxDefinitions],
    ];
    for (const [name, actual, limit] of checks) {
      if (actual > limit) throw new EngineLimitError(`too_many_${name}`, `the model has ${actual} ${name}; the limit is ${limit}`);
    }
  }
}
