import { describe, expect, it } from "vitest";
import { progressAfter, STAGE_PROGRESS, watchedRunner, type CancellableEngine } from "@/lib/evaluation/watched-runner";

describe("progressAfter", () => {
  it("moves on as the evaluation's stages end and never goes back", () => {
    expect(progressAfter("derive", 0)).toBe(STAGE_PROGRESS.derive);
    expect(progressAfter("linearize", progressAfter("equilibria", progressAfter("derive", 0)))).toBe(STAGE_PROGRESS.linearize);
    // A second equilibrium search (another equilibrium) after the linearization does not lower it.
    expect(progressAfter("equilibria", STAGE_PROGRESS.linearize!)).toBe(STAGE_PROGRESS.linearize);
    expect(progressAfter("checkUnits", 0.3)).toBe(0.3);
  });
});

describe("watchedRunner", () => {
  it("passes the job's signal and time limit to every task and reports progress after each", async () => {
    const calls: { task: string; timeoutMs?: number; signal?: AbortSignal }[] = [];
    const engine: CancellableEngine = {
      async run<T>(task: string, _payload: unknown, options?: { timeoutMs?: number; signal?: AbortSignal }): Promise<T> {
        calls.push({ task, ...options });
        return task as T;
      },
    };
    const controller = new AbortController();
    const reported: number[] = [];
    const runner = watchedRunner(engine, { signal: controller.signal, progress: (f) => reported.push(f), timeoutMs: 120_000 });
    expect(await runner.run("derive", {})).toBe("derive");
    await runner.run("equilibria", {});
    await runner.run("exportCode", {});
    expect(calls.map((c) => c.task)).toEqual(["derive", "equilibria", "exportCode"]);
    expect(calls.every((c) => c.signal === controller.signal && c.timeoutMs === 120_000)).toBe(true);
    expect(reported).toEqual([STAGE_PROGRESS.derive, STAGE_PROGRESS.equilibria, STAGE_PROGRESS.exportCode]);
  });

  it("reports no progress for a task that failed (a cancelled one)", async () => {
    const engine: CancellableEngine = {
      run: () => Promise.reject(new Error("the task was cancelled")),
    };
    const reported: number[] = [];
    const runner = watchedRunner(engine, { signal: new AbortController().signal, progress: (f) => reported.push(f), timeoutMs: 1000 });
    await expect(runner.run("derive", {})).rejects.toThrow("cancelled");
    expect(reported).toEqual([]);
  });
});
