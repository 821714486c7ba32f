// Queue workers as separate processes (scripts/worker.ts, as production starts them),
// for the integration tests of jobs: started, waited for until they take jobs, stopped.
import { spawn, type ChildProcess } from "node:child_process";
import path from "node:path";

const ROOT = path.resolve(import.meta.dirname, "../../..");

/** Starts a queue worker process; resolves once it is taking jobs. Keep it in `started` to stop it later. */
export function startWorkerProcess(started: ChildProcess[]): Promise<ChildProcess> {
  // node itself (not npx or the tsx CLI), so a signal reaches the worker and not only a wrapper.
  const worker = spawn(process.execPath, ["--conditions=react-server", "--import", "tsx", "scripts/worker.ts"], {
    cwd: ROOT,
    env: { ...process.env, AWS_SDK_JS_NODE_VERSION_SUPPORT_WARNING_DISABLED: "true" },
    stdio: ["ignore", "pipe", "inherit"],
  });
  started.push(worker);
  return new Promise((resolve, reject) => {
    let output = "";
    worker.stdout!.on("data", (chunk: Buffer) => {
      output += chunk.toString();
      if (output.includes("ready")) resolve(worker);
    });
    worker.once("exit", (code) => reject(new Error(`the worker exited with code ${code} before it was ready: ${output}`)));
  });
}

/** Stops a worker with SIGTERM (it finishes or hands back its job) and waits for it to exit. */
export function stopWorkerProcess(worker: ChildProcess): Promise<void> {
  return new Promise((resolve) => {
    if (worker.exitCode !== null) return resolve();
    worker.once("exit", () => resolve());
    worker.kill("SIGTERM");
  });
}
