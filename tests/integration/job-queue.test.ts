import type { ChildProcess } from "node:child_process";
import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";

vi.mock("@/lib/auth/session", async () => (await import("./support/session")).sessionModule);

import * as cancelRoute from "@/app/api/derivations/[id]/jobs/[jobId]/cancel/route";
import * as jobRoute from "@/app/api/derivations/[id]/jobs/[jobId]/route";
import * as runsRoute from "@/app/api/derivations/[id]/runs/route";
import { closeDatabase } from "@/db/client";
import { createDerivation } from "@/db/queries/derivations";
import { getJobById } from "@/db/queries/jobs";
import { closeJobQueue } from "@/lib/jobs/boss";
import type { JobJson } from "@/lib/jobs/views";
import type { Model } from "@/lib/mechanics";
import { modelToDocument } from "@/lib/notebook/document";
import { LONG_ARM_RUN, doubleArm } from "../support/rig-models";
import type { RunJson } from "@/lib/runs/views";
import { jsonRequest, makeTeam, params, resetDatabase, type TeamFixture } from "./support/fixtures";
import { startWorkerProcess, stopWorkerProcess } from "./support/worker-process";
import { signInAs } from "./support/session";

// Jobs queued here (the web side: route handlers in this process) must be run by
// a queue worker in another process (scripts/worker.ts, as the start scripts run it).

// Gimbal pitch axis on a test stand: a point mass on a light arm.
const pendulum: Model = {
  title: "Gimbal pitch arm",
  coordinates: [{ name: "theta", unit: "rad" }],
  parameters: [
    { name: "m", unit: "kg", value: 2.5 },
    { name: "l", unit: "m", value: 1.5 },
    { name: "g", unit: "m/s^2", value: 9.81 },
  ],
  kinetic: "1/2*m*l^2*theta'^2",
  potential: "-m*g*l*cos(theta)",
};

let kestrel: TeamFixture;
const workers: ChildProcess[] = [];

const startWorker = () => startWorkerProcess(workers);
const stopWorker = stopWorkerProcess;

async function createModelDerivation(model: Model): Promise<string> {
  const derivation = await createDerivation({
    teamId: kestrel.team.id,
    title: model.title,
    ownerId: kestrel.members.analyst.id,
    content: modelToDocument(model),
  });
  return derivation.id;
}

async function queueRun(derivationId: string, settings: Record<string, unknown>): Promise<JobJson> {
  const request = jsonRequest(`/api/derivations/${derivationId}/runs`, "POST", settings);
  request.headers.set("prefer", "respond-async");
  const response = await runsRoute.POST(request, params({ id: derivationId }));
  expect(response.status).toBe(202);
  return ((await response.json()) as { job: JobJson }).job;
}

async function readJob(derivationId: string, jobId: string): Promise<JobJson> {
  const response = await jobRoute.GET(jsonRequest(`/api/derivations/${derivationId}/jobs/${jobId}`, "GET"), params({ id: derivationId, jobId }));
  expect(response.status).toBe(200);
  return ((await response.json()) as { job: JobJson }).job;
}

/** Polls the job route, as the page does, until `done` holds; returns every state seen with the last job. */
async function pollJob(derivationId: string, jobId: string, done: (job: JobJson) => boolean, timeoutMs = 120_000) {
  const seen: JobJson[] = [];
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const job = await readJob(derivationId, jobId);
    seen.push(job);
    if (done(job)) return { job, seen };
    if (Date.now() > deadline) throw new Error(`job ${jobId} is still ${job.state} after ${timeoutMs} ms`);
    await new Promise((resolve) => setTimeout(resolve, 250));
  }
}

const ended = (job: JobJson) => ["completed", "failed", "cancelled"].includes(job.state);

async function runsOf(derivationId: string): Promise<RunJson[]> {
  const response = await runsRoute.GET(jsonRequest(`/api/derivations/${derivationId}/runs`, "GET"), params({ id: derivationId }));
  return ((await response.json()) as { runs: RunJson[] }).runs;
}

beforeAll(async () => {
  await resetDatabase();
  kestrel = await makeTeam("Kestrel job rig");
  signInAs(kestrel.members.analyst);
});

afterAll(async () => {
  await Promise.all(workers.map(stopWorker));
  await closeJobQueue();
  await closeDatabase();
}, 60_000);

describe("job queue across processes", () => {
  it("survives a restart of the web side: a job queued while no worker runs is run by a worker started later", async () => {
    const id = await createModelDerivation(pendulum);
    const job = await queueRun(id, { initialCoordinates: { theta: 0.3 }, endTime: 2, outputStep: 0.01, label: "queued before any worker" });
    expect(job.state).toBe("queued");
    // The web process goes away (its queue connection closes); only PostgreSQL holds the job now.
    await closeJobQueue();
    expect((await getJobById({ id: job.id }))?.state).toBe("queued");

    await startWorker();
    const { job: finished } = await pollJob(id, job.id, ended);
    expect(finished.state).toBe("completed");
    expect(finished.progress).toBe(1);
    const runs = await runsOf(id);
    expect(runs.map((run) => run.id)).toEqual([finished.result!.runId]);
    expect(runs[0]!.settings.label).toBe("queued before any worker");
  }, 240_000);

  it("runs a job queued by this process in the worker process and reports progress while it runs", async () => {
    const id = await createModelDerivation(doubleArm);
    // Long enough for several progress reports (written at most every 0.5 s).
    const job = await queueRun(id, LONG_ARM_RUN);
    const { job: finished, seen } = await pollJob(id, job.id, ended);
    expect(finished.state).toBe("completed");
    expect(finished.error).toBeNull();
    expect(seen.some((j) => j.state === "running")).toBe(true);
    // Progress moved between the start and the end, as the page shows it.
    expect(seen.some((j) => j.state === "running" && j.progress > 0 && j.progress < 1)).toBe(true);
    const runs = await runsOf(id);
    expect(runs).toHaveLength(1);
    expect(runs[0]!.id).toBe(finished.result!.runId);
  }, 240_000);

  it("answers a waiting request with the run the worker stored, as before the queue", async () => {
    const id = await createModelDerivation(pendulum);
    const response = await runsRoute.POST(
      jsonRequest(`/api/derivations/${id}/runs`, "POST", { initialCoordinates: { theta: 0.2 }, endTime: 1, outputStep: 0.05 }),
      params({ id }),
    );
    expect(response.status).toBe(201);
    const { run, job } = (await response.json()) as { run: RunJson; job: JobJson };
    expect(job.state).toBe("completed");
    expect(run.status).toBe("completed");
    expect(run.trajectory?.times.length).toBe(21);
  }, 240_000);

  it("cancels a running job: the worker stops it and stores nothing", async () => {
    const id = await createModelDerivation(doubleArm);
    // Far longer than its 20 s limit allows, whatever the simulator's speed: only the cancel ends it early.
    const job = await queueRun(id, { initialCoordinates: { a: 2, b: 2.5 }, endTime: 1_000_000, outputStep: 50, timeLimitMs: 20_000 });
    await pollJob(id, job.id, (j) => j.state === "running" || ended(j));
    const cancelledAt = Date.now();
    const response = await cancelRoute.POST(jsonRequest(`/api/derivations/${id}/jobs/${job.id}/cancel`, "POST"), params({ id, jobId: job.id }));
    expect(response.status).toBe(200);
    expect(((await response.json()) as { job: JobJson }).job.state).toBe("cancelled");

    // The worker is free again long before the cancelled run's 20 s limit would have ended it.
    const next = await queueRun(id, { initialCoordinates: { a: 0.1, b: 0.1 }, endTime: 1, outputStep: 0.1 });
    const { job: after } = await pollJob(id, next.id, ended);
    expect(after.state).toBe("completed");
    expect(Date.now() - cancelledAt).toBeLessThan(20_000);
    const cancelled = await readJob(id, job.id);
    expect(cancelled.state).toBe("cancelled");
    expect(cancelled.result).toBeNull();
    // Only the second job's run is stored.
    expect((await runsOf(id)).map((run) => run.id)).toEqual([after.result!.runId]);
  }, 240_000);

  it("refuses to show another team's job", async () => {
    const id = await createModelDerivation(pendulum);
    const job = await queueRun(id, { initialCoordinates: { theta: 0.1 }, endTime: 0.5, outputStep: 0.1 });
    const other = await makeTeam("Other rig");
    signInAs(other.members.lead);
    try {
      const response = await jobRoute.GET(jsonRequest(`/api/derivations/${id}/jobs/${job.id}`, "GET"), params({ id, jobId: job.id }));
      expect(response.status).toBe(404);
      const cancel = await cancelRoute.POST(jsonRequest(`/api/derivations/${id}/jobs/${job.id}/cancel`, "POST"), params({ id, jobId: job.id }));
      expect(cancel.status).toBe(404);
    } finally {
      signInAs(kestrel.members.analyst);
    }
  }, 60_000);
});
