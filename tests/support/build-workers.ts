import { execFileSync } from "node:child_process";

/**
 * Vitest global setup: bundles the worker-thread entries (dist/workers/*.mjs)
 * once per run, before any test file, so every suite that starts the engine or
 * simulation pool runs the code as it is now, without building it again itself.
 */
export default function buildWorkers(): void {
  execFileSync("bash", ["scripts/build-workers.sh"], { stdio: "inherit" });
}
