import { spawn, type ChildProcess } from "node:child_process";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";

vi.mock("@/lib/auth/session", async () => (await import("./support/session")).sessionModule);

import * as runsRoute from "@/app/api/derivations/[id]/runs/route";
import { closeDatabase } from "@/db/client";
import { createDerivation } from "@/db/queries/derivations";
import { closeJobQueue } from "@/lib/jobs/boss";
import { waitForJob } from "@/lib/jobs/queue";
import type { JobJson } from "@/lib/jobs/views";
import { modelToDocument } from "@/lib/notebook/document";
import { LONG_ARM_RUN, doubleArm } from "../support/rig-models";
import { jsonRequest, makeTeam, params, resetDatabase, type TeamFixture } from "./support/fixtures";
import { signInAs } from "./support/session";

// More than one machine's worth of queue workers: jobs queued by this process
// (the web side, through its JobQueue) are run by two separate worker
// processes (scripts/worker.ts, as started in production), each job by exactly
// one process and none by the process that queued it (the test command's own
// queue worker may take one too; the job row names the process that ran it). Each worker logs the jobs
// it takes with its process id.

interface WorkerProcess {
  child: ChildProcess;
  /** Job ids this worker logged taking. */
  took: string[];
}

let kestrel: TeamFixture;
const workers: WorkerProcess[] = [];

/** Starts a queue worker process; resolves once it is taking jobs. */
function startWorker(): Promise<WorkerProcess> {
  const child = spawn(process.execPath, ["--conditions=react-server", "--import", "tsx", "scripts/worker.ts"], {
    cwd: path.resolve(import.meta.dirname, "../.."),
    env: { ...process.env, AWS_SDK_JS_NODE_VERSION_SUPPORT_WARNING_DISABLED: "true" },
    stdio: ["ignore", "pipe", "inherit"],
  });
  const worker: WorkerProcess = { child, took: [] };
  workers.push(worker);
  return new Promise((resolve, reject) => {
    let output = "";
    child.stdout!.on("data", (chunk: Buffer) => {
      output += chunk.toString();
      for (const match of output.matchAll(/queue worker (\d+) took \w+ job ([0-9a-f-]{36})/g)) {
        if (Number(match[1]) === child.pid && !worker.took.includes(match[2]!)) worker.took.push(match[2]!);
      }
      if (output.includes("ready")) resolve(worker);
    });
    child.once("exit", (code) => reject(new Error(`the worker exited with code ${code} before it was ready: ${output}`)));
  });
}

function stopWorker({ child }: WorkerProcess): Promise<void> {
  return new Promise((resolve) => {
    if (child.exitCode !== null) return resolve();
    child.once("exit", () => resolve());
    child.kill("SIGTERM");
  });
}

beforeAll(async () => {
  await resetDatabase();
  kestrel = await makeTeam("Kestrel worker pool");
  signInAs(kestrel.members.analyst);
}, 60_000);

afterAll(async () => {
  await Promise.all(workers.map(stopWorker));
  await closeJobQueue();
  await closeDatabase();
}, 60_000);

describe("jobs across processes", () => {
  it("runs jobs queued here in two other worker processes, each job in exactly one", async () => {
    const [first, second] = await Promise.all([startWorker(), startWorker()]);
    const derivation = await createDerivation({
      teamId: kestrel.team.id,
      title: doubleArm.title,
      ownerId: kestrel.members.analyst.id,
      content: modelToDocument(doubleArm),
    });
    // Two jobs at once: a worker takes one job at a time, so while one is busy the other takes the second.
    const queued: JobJson[] = [];
    for (const label of ["left arm release", "right arm release"]) {
      const request = jsonRequest(`/api/derivations/${derivation.id}/runs`, "POST", {
        ...LONG_ARM_RUN,
        label,
      });
      request.headers.set("prefer", "respond-async");
      const response = await runsRoute.POST(request, params({ id: derivation.id }));
      expect(response.status).toBe(202);
      queued.push(((await response.json()) as { job: JobJson }).job);
    }
    const finished = [];
    for (const job of queued) {
      const done = await waitForJob(job.id, { timeoutMs: 180_000 });
      expect(done.state).toBe("completed");
      finished.push(done);
    }
    const pids = [first!.child.pid, second!.child.pid];
    expect(pids).not.toContain(process.pid);
    // Each job records the process that ran it ("<host>:<pid>"): never this one, the one that queued it.
    const ranBy = finished.map((job) => Number(job.worker!.split(":").at(-1)));
    expect(ranBy).not.toContain(process.pid);
    // Queued together, the two jobs ran at the same time in two processes (a worker takes one at a
    // time). The test command also runs a queue worker of its own, which may take one of them.
    expect(new Set(finished.map((job) => job.worker)).size).toBe(2);
    for (const [k, job] of queued.entries()) {
      // Delivered once: at most one of this test's workers took it, and the row names that one.
      const takers = workers.filter((worker) => worker.took.includes(job.id)).map((worker) => worker.child.pid);
      expect(takers.length).toBeLessThanOrEqual(1);
      if (takers.length === 1) expect(ranBy[k]).toBe(takers[0]);
    }
    // Without another worker on the database, both of this test's workers took part.
    if (ranBy.every((pid) => pids.includes(pid))) {
      expect(first!.took).toHaveLength(1);
      expect(second!.took).toHaveLength(1);
    }
  }, 300_000);
});
