// The app's processes started by a test (the Next.js server, the collaboration
// server, a queue worker): each in its own process group, so that a signal sent
// to the group reaches the process and anything it started, and nothing else;
// output appended to a log file for the test report.
import { spawn, type ChildProcess } from "node:child_process";
import { createWriteStream } from "node:fs";

export interface ServiceProcess {
  name: string;
  child: ChildProcess;
  /** Everything it printed so far (stdout and stderr). */
  output(): string;
  /** Sends `signal` to its process group and waits for the process to exit. */
  kill(signal: NodeJS.Signals): Promise<void>;
}

export function startService({
  name,
  args,
  cwd,
  env,
  logFile,
}: {
  name: string;
  args: string[];
  cwd: string;
  env: NodeJS.ProcessEnv;
  logFile: string;
}): ServiceProcess {
  // node itself (not npx or a shell), so the signal reaches the server rather than a wrapper.
  const child = spawn(process.execPath, args, { cwd, env, detached: true, stdio: ["ignore", "pipe", "pipe"] });
  const log = createWriteStream(logFile, { flags: "a" });
  let output = "";
  const keep = (chunk: Buffer) => {
    output += chunk.toString();
    if (output.length > 200_000) output = output.slice(-100_000);
    log.write(chunk);
  };
  child.stdout!.on("data", keep);
  child.stderr!.on("data", keep);
  const exited = new Promise<void>((resolve) => child.once("exit", () => resolve()));
  child.once("exit", (code, signal) => log.end(`[test] ${name} exited (${signal ?? code})\n`));
  return {
    name,
    child,
    output: () => output,
    async kill(signal) {
      if (child.exitCode !== null || child.signalCode !== null) return;
      try {
        process.kill(-child.pid!, signal);
      } catch {
        // already gone
      }
      await exited;
    },
  };
}

/** Polls `condition` every 100 ms until it holds; throws after `timeoutMs` naming `what`. */
export async function waitUntil(condition: () => boolean | Promise<boolean>, what: string, timeoutMs = 60_000): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  const holds = async () => {
    try {
      return await condition();
    } catch {
      return false;
    }
  };
  while (!(await holds())) {
    if (Date.now() > deadline) throw new Error(`timed out after ${timeoutMs} ms waiting for ${what}`);
    await new Promise((resolve) => setTimeout(resolve, 100));
  }
}

/** True when `url` answers 2xx within two seconds. */
export async function answersOk(url: string): Promise<boolean> {
  try {
    return (await fetch(url, { signal: AbortSignal.timeout(2000) })).ok;
  } catch {
    return false;
  }
}
