import { mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { build } from "esbuild";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { EngineLimitError, ModelError } from "@/lib/mechanics/errors";
import type { Linearization } from "@/lib/mechanics/linearize";
import { EnginePool } from "@/lib/mechanics/worker/pool";

// Worker threads cannot load TypeScript, so the test entry is bundled the way build:workers bundles the real one.
const bundleDir = mkdtempSync(path.join(tmpdir(), "holonomy-pool-"));
const fixture = path.join(bundleDir, "test-worker.mjs");
beforeAll(async () => {
  await build({
    entryPoints: [path.resolve("tests/unit/mechanics/worker/fixtures/test-worker.ts")],
    bundle: true,
    platform: "node",
    format: "esm",
    target: "node20",
    outfile: fixture,
    banner: { js: "import { createRequire as __createRequire } from 'node:module'; const require = __createRequire(import.meta.url);" },
    logLevel: "warning",
  });
}, 60_000);
afterAll(() => rmSync(bundleDir, { recursive: true, force: true }));

// A simple pendulum hanging from a test-rig frame.
const pendulumModel = {
  title: "Rig pendulum",
  coordinates: [{ name: "theta", unit: "rad" }],
  parameters: [
    { name: "m", unit: "kg", value: 2 },
    { name: "l", unit: "m", value: 0.5 },
    { name: "g", unit: "m/s^2", value: 9.81 },
  ],
  kinetic: "1/2*m*l^2*theta'^2",
  potential: "-m*g*l*cos(theta)",
};

describe("EnginePool", () => {
  let pool: EnginePool;
  beforeAll(() => {
    pool = new EnginePool({ workerFile: fixture, size: 1, taskTimeoutMs: 1500, resourceLimits: { maxOldGenerationSizeMb: 96, maxYoungGenerationSizeMb: 16 } });
  });
  afterAll(() => pool.close());

  it("runs an engine task in a worker", async () => {
    const lin = await pool.run<Linearization>("linearize", {
      system: { coordinates: ["x"], massMatrix: [["m"]], forcing: ["-k*x"], parameters: { m: 1, k: 4 } },
      point: { q: [0] },
    });
    expect(lin.modes[0]!.radPerSecond).toBeCloseTo(2, 12);
  }, 20_000);

  it("stops a task that loops forever at the time limit, and keeps working", async () => {
    const started = Date.now();
    const error = await pool.run("spin", {}, { timeoutMs: 400 }).catch((e: unknown) => e);
    expect(error).toBeInstanceOf(EngineLimitError);
    expect((error as EngineLimitError).limit).toBe("time");
    expect(Date.now() - started).toBeLessThan(5000);
    expect(await pool.run("echo", { after: "spin" })).toEqual({ after: "spin" });
    expect(pool.stats.size).toBe(1);
  }, 20_000);

  it("passes a task's progress reports on before its answer", async () => {
    const reports: number[] = [];
    // A wide limit: starting a worker thread alone can take seconds on a busy machine.
    const result = await pool.run("steps", { count: 4 }, { timeoutMs: 15_000, onProgress: (fraction) => reports.push(fraction) });
    expect(result).toEqual({ done: 4 });
    expect(reports).toEqual([0.25, 0.5, 0.75, 1]);
  }, 20_000);

  it("cancels a running task by stopping its worker, and a waiting one before it starts, and keeps working", async () => {
    const running = new AbortController();
    const waiting = new AbortController();
    const first = pool.run("spin", {}, { timeoutMs: 15_000, signal: running.signal }).catch((e: unknown) => e);
    const second = pool.run("echo", { never: true }, { timeoutMs: 15_000, signal: waiting.signal }).catch((e: unknown) => e);
    const started = Date.now();
    waiting.abort();
    running.abort();
    for (const error of await Promise.all([first, second])) {
      expect(error).toBeInstanceOf(EngineLimitError);
      expect((error as EngineLimitError).limit).toBe("cancelled");
    }
    expect(Date.now() - started).toBeLessThan(5000);
    expect(await pool.run("echo", { after: "cancel" }, { timeoutMs: 15_000 })).toEqual({ after: "cancel" });
    expect(pool.stats.size).toBe(1);
  }, 20_000);

  it("stops a task that exhausts its memory cap, and keeps working", async () => {
    const error = await pool.run("hog", {}, { timeoutMs: 15_000 }).catch((e: unknown) => e);
    expect(error).toBeInstanceOf(EngineLimitError);
    expect((error as EngineLimitError).limit).toBe("memory");
    expect(await pool.run("echo", [1, 2, 3])).toEqual([1, 2, 3]);
  }, 30_000);

  it("refuses oversized and too deeply nested input before dispatch", async () => {
    const small = new EnginePool({ workerFile: fixture, size: 1, maxInputLength: 1000, maxInputDepth: 8 });
    try {
      const big = await small.run("echo", { text: "x".repeat(2000) }).catch((e: unknown) => e);
      expect(big).toBeInstanceOf(EngineLimitError);
      expect((big as EngineLimitError).limit).toBe("input_size");
      let deep: unknown = 1;
      for (let i = 0; i < 20; i++) deep = [deep];
      const nested = await small.run("echo", deep).catch((e: unknown) => e);
      expect((nested as EngineLimitError).limit).toBe("input_depth");
      const crowded = await small.run("linearize", { system: { coordinates: Array.from({ length: 40 }, (_, i) => `q${i}`) } }).catch((e: unknown) => e);
      expect((crowded as EngineLimitError).limit).toBe("too_many_coordinates");
      // Nothing was dispatched: the worker is idle and nothing is queued.
      expect(small.stats).toEqual({ size: 1, busy: 0, queued: 0 });
    } finally {
      await small.close();
    }
  }, 20_000);

  it("brings typed model errors back as the same classes", async () => {
    const error = await pool.run("derive", { model: { ...pendulumModel, potential: "-m*g*cos(theta)" } }).catch((e: unknown) => e);
    expect(error).toBeInstanceOf(ModelError);
    expect((error as ModelError).code).toBe("unit_mismatch");
    expect((error as ModelError).field).toBe("potential");
    const unknown = await pool.run("no-such-task", {}).catch((e: unknown) => e);
    expect((unknown as Error).message).toMatch(/unknown engine task/);
  }, 20_000);

  it("queues tasks beyond the workers and runs them in order", async () => {
    const results = await Promise.all([1, 2, 3, 4].map((k) => pool.run("echo", { k })));
    expect(results).toEqual([{ k: 1 }, { k: 2 }, { k: 3 }, { k: 4 }]);
  }, 20_000);
});

describe("production worker bundle (npm run build:workers)", () => {
  let pool: EnginePool;
  beforeAll(() => {
    pool = new EnginePool({ workerFile: path.resolve("dist/workers/engine-worker.mjs"), size: 1 });
  }, 60_000);
  afterAll(() => pool.close());

  it("derives, linearizes and exports code without a TypeScript loader", async () => {
    const derived = await pool.run<{ massMatrix: string[][]; forcing: string[] }>("derive", { model: pendulumModel });
    const system = { coordinates: ["theta"], massMatrix: derived.massMatrix, forcing: derived.forcing, parameters: { m: 2, l: 0.5, g: 9.81 } };
    const lin = await pool.run<Linearization>("linearize", { system, point: { q: [0] } });
    // Small-angle pendulum ω = √(g/l) — fact of the trade (any mechanics text; from memory).
    expect(lin.modes[0]!.radPerSecond).toBeCloseTo(Math.sqrt(9.81 / 0.5), 10);
    const { code } = await pool.run<{ code: string }>("exportCode", {
      input: {
        coordinates: ["theta"],
        parameters: [
          { name: "m", value: 2 },
          { name: "l", value: 0.5 },
          { name: "g", value: 9.81 },
        ],
        massMatrix: derived.massMatrix,
        forcing: derived.forcing,
      },
      language: "c",
    });
    expect(code).toContain("void model_mass_matrix(");
  }, 30_000);
});
