/**
 * An engine runner for a queued evaluation: each task is stopped when the job
 * is cancelled (the pool terminates its thread), may take the queue's longer
 * time limit, and the job's progress moves on as the evaluation's stages end.
 */
import type { EngineRunner } from "./evaluate";

/**
 * Engine time a queued evaluation's task may take: the point of queueing a
 * large model is that it no longer has to fit a request (the web process's
 * pool keeps its 20 s); the worker's memory limit still applies.
 */
export const QUEUED_ENGINE_TASK_MS = 120_000;

/** The engine's task runner with its per-task options (EnginePool.run). */
export interface CancellableEngine {
  run<T = unknown>(task: string, payload: unknown, options?: { timeoutMs?: number; signal?: AbortSignal }): Promise<T>;
}

/**
 * Progress after each task of an evaluation (lib/evaluation/evaluate.ts runs
 * derive, then equilibria and linearize, then one exportCode per language).
 * Deriving is most of the work; the rest share what is left.
 */
export const STAGE_PROGRESS: Readonly<Record<string, number>> = { derive: 0.6, equilibria: 0.75, linearize: 0.85, exportCode: 0.95 };

/** Progress after `task` ends, never going back (unknown tasks leave it where it was). */
export function progressAfter(task: string, current: number): number {
  return Math.max(current, STAGE_PROGRESS[task] ?? current);
}

export function watchedRunner(
  engine: CancellableEngine,
  { signal, progress, timeoutMs }: { signal: AbortSignal; progress: (fraction: number) => void; timeoutMs: number },
): EngineRunner {
  let done = 0;
  return {
    async run<T>(task: string, payload: unknown): Promise<T> {
      const answer = await engine.run<T>(task, payload, { signal, timeoutMs });
      done = progressAfter(task, done);
      progress(done);
      return answer;
    },
  };
}
