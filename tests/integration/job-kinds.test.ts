import { spawn, type ChildProcess } from "node:child_process";
import { randomUUID } from "node:crypto";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";

vi.mock("@/lib/auth/session", async () => (await import("./support/session")).sessionModule);

import * as evaluateRoute from "@/app/api/derivations/[id]/evaluate/route";
import * as cancelRoute from "@/app/api/derivations/[id]/jobs/[jobId]/cancel/route";
import * as downloadRoute from "@/app/api/derivations/[id]/jobs/[jobId]/download/route";
import * as jobRoute from "@/app/api/derivations/[id]/jobs/[jobId]/route";
import * as reportRoute from "@/app/api/derivations/[id]/revisions/[revisionId]/report/route";
import * as derivationRoute from "@/app/api/derivations/[id]/route";
import * as purgeRoute from "@/app/api/teams/[teamId]/trash/[derivationId]/route";
import { closeDatabase } from "@/db/client";
import { createCommentThread, setCommentThreadStatusById } from "@/db/queries/comments";
import { createDerivation } from "@/db/queries/derivations";
import { getEvaluationByModelHash } from "@/db/queries/evaluations";
import { countJobsByDerivationId } from "@/db/queries/jobs";
import { createCheckpoint } from "@/db/queries/revisions";
import type { EvaluationResponse } from "@/lib/evaluation/views";
import { closeJobQueue } from "@/lib/jobs/boss";
import type { JobJson } from "@/lib/jobs/views";
import { chainModel, type Model } from "@/lib/mechanics";
import { modelToDocument } from "@/lib/notebook/document";
import { closeEnginePool } from "@/lib/workers/engine-pool";
import { deleteObject, objectExists } from "@/lib/storage";
import type { SessionUser } from "@/lib/auth/session";
import { jsonRequest, makeTeam, params, resetDatabase, type TeamFixture } from "./support/fixtures";
import { signInAs } from "./support/session";

// Evaluations of large models and report files as jobs: queued by the route
// handlers in this process (the web side), run by a queue worker in another
// process (scripts/worker.ts), followed, cancelled and read back as the page does.

let kestrel: TeamFixture;
let worker: ChildProcess | null = null;
const storedKeys: string[] = [];

/**
 * A chain of the given length under a title of its own, so the evaluation cache
 * (keyed by content, kept across test runs) has never seen it.
 */
function freshChain(links: number): Model {
  return { ...chainModel({ links }), title: `Kestrel test-rig chain ${links} ${randomUUID()}` };
}

// The hoist test stand's load: a point mass on a rope (small: evaluated on the request).
const hoist: Model = {
  title: "Hoist stand load",
  coordinates: [{ name: "theta", unit: "rad" }],
  parameters: [
    { name: "m", unit: "kg", value: 120 },
    { name: "l", unit: "m", value: 3 },
    { name: "g", unit: "m/s^2", value: 9.81 },
  ],
  kinetic: "1/2*m*l^2*theta'^2",
  potential: "-m*g*l*cos(theta)",
};

function startWorker(): Promise<ChildProcess> {
  const child = spawn(process.execPath, ["--conditions=react-server", "--import", "tsx", "scripts/worker.ts"], {
    cwd: path.resolve(import.meta.dirname, "../.."),
    env: { ...process.env, AWS_SDK_JS_NODE_VERSION_SUPPORT_WARNING_DISABLED: "true" },
    stdio: ["ignore", "pipe", "inherit"],
  });
  worker = child;
  return new Promise((resolve, reject) => {
    let output = "";
    child.stdout!.on("data", (chunk: Buffer) => {
      output += chunk.toString();
      if (output.includes("ready")) resolve(child);
    });
    child.once("exit", (code) => reject(new Error(`the worker exited with code ${code} before it was ready: ${output}`)));
  });
}

async function createModelDerivation(model: Model, owner: SessionUser = kestrel.members.analyst): Promise<string> {
  const derivation = await createDerivation({ teamId: kestrel.team.id, title: model.title, ownerId: owner.id, content: modelToDocument(model) });
  return derivation.id;
}

async function evaluate(id: string, { async = true }: { async?: boolean } = {}): Promise<{ status: number; body: EvaluationResponse | { job: JobJson } }> {
  const request = jsonRequest(`/api/derivations/${id}/evaluate`, "POST", {});
  if (async) request.headers.set("prefer", "respond-async");
  const response = await evaluateRoute.POST(request, params({ id }));
  return { status: response.status, body: (await response.json()) as EvaluationResponse | { job: JobJson } };
}

async function queuedEvaluation(id: string): Promise<JobJson> {
  const { status, body } = await evaluate(id);
  expect(status).toBe(202);
  return (body as { job: JobJson }).job;
}

async function readJob(id: string, jobId: string): Promise<JobJson> {
  const response = await jobRoute.GET(jsonRequest(`/api/derivations/${id}/jobs/${jobId}`, "GET"), params({ id, jobId }));
  expect(response.status).toBe(200);
  return ((await response.json()) as { job: JobJson }).job;
}

async function cancel(id: string, jobId: string): Promise<Response> {
  return cancelRoute.POST(jsonRequest(`/api/derivations/${id}/jobs/${jobId}/cancel`, "POST"), params({ id, jobId }));
}

const ended = (job: JobJson) => ["completed", "failed", "cancelled"].includes(job.state);

async function pollJob(id: string, jobId: string, done: (job: JobJson) => boolean, timeoutMs = 180_000) {
  const seen: JobJson[] = [];
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const job = await readJob(id, jobId);
    seen.push(job);
    if (done(job)) return { job, seen };
    if (Date.now() > deadline) throw new Error(`job ${jobId} is still ${job.state} after ${timeoutMs} ms`);
    await new Promise((resolve) => setTimeout(resolve, 200));
  }
}

async function queueReport(id: string, revisionId: string): Promise<JobJson> {
  const response = await reportRoute.POST(jsonRequest(`/api/derivations/${id}/revisions/${revisionId}/report`, "POST", {}), params({ id, revisionId }));
  expect(response.status).toBe(202);
  return ((await response.json()) as { job: JobJson }).job;
}

async function download(id: string, jobId: string): Promise<Response> {
  return downloadRoute.GET(jsonRequest(`/api/derivations/${id}/jobs/${jobId}/download`, "GET"), params({ id, jobId }));
}

/** A derivation of the hoist with a checkpoint and two comment threads (one resolved); its id and the revision's. */
async function reportFixture(): Promise<{ id: string; revisionId: string }> {
  const id = await createModelDerivation({ ...hoist, title: "Hoist stand load <report>" });
  const checkpoint = await createCheckpoint({ derivationId: id, name: "Before the drop test", actorId: kestrel.members.analyst.id });
  if (!checkpoint.ok) throw new Error("the checkpoint was refused");
  const noMentions = { mentionedUserIds: [], notificationFor: () => ({}) as never };
  await createCommentThread({
    thread: {
      derivationId: id,
      authorId: kestrel.members.reviewer.id,
      anchorKind: "term",
      termKey: "eq/theta/t1",
      termText: "m*l^2*theta''",
      termLatex: "m l^{2} \\ddot{\\theta}",
    },
    body: "Rope stretch left out on purpose?",
    mentions: noMentions,
    audit: { teamId: kestrel.team.id, derivationId: id, actorId: kestrel.members.reviewer.id },
  });
  const { thread } = await createCommentThread({
    thread: {
      derivationId: id,
      authorId: kestrel.members.analyst.id,
      anchorKind: "term",
      termKey: "eq/theta/t2",
      termText: "m*g*l*sin(theta)",
      termLatex: "m g l \\sin\\theta",
    },
    body: "Gravity term checked against the stand drawing.",
    mentions: noMentions,
    audit: { teamId: kestrel.team.id, derivationId: id, actorId: kestrel.members.analyst.id },
  });
  await setCommentThreadStatusById({
    id: thread.id,
    status: "resolved",
    audit: { teamId: kestrel.team.id, derivationId: id, actorId: kestrel.members.reviewer.id },
  });
  return { id, revisionId: checkpoint.revision.id };
}

beforeAll(async () => {
  await resetDatabase();
  kestrel = await makeTeam("Kestrel queued work");
  signInAs(kestrel.members.analyst);
});

afterAll(async () => {
  if (worker && worker.exitCode === null) {
    const child = worker;
    await new Promise<void>((resolve) => {
      child.once("exit", () => resolve());
      child.kill("SIGTERM");
    });
  }
  for (const key of storedKeys) await deleteObject({ key }).catch(() => undefined);
  await closeJobQueue();
  await closeEnginePool();
  await closeDatabase();
}, 60_000);

describe("evaluation and report jobs", () => {
  // This file starts its own worker part-way; the full suite (scripts/test.sh) runs one throughout, so a
  // job queued before that may already be running: the checks hold either way.
  let largeId = "";
  let largeJob: JobJson;
  let cancelledEvaluation: { id: string; job: JobJson };
  let cancelledReport: { id: string; job: JobJson };

  it("evaluates a small model on the request, queueing nothing", async () => {
    const id = await createModelDerivation({ ...hoist, title: `Hoist stand load ${randomUUID()}` });
    const { status, body } = await evaluate(id);
    expect(status).toBe(200);
    expect((body as EvaluationResponse).result.coordinates).toEqual(["theta"]);
    expect(await countJobsByDerivationId({ derivationId: id })).toEqual({});
  }, 60_000);

  it("queues a large model's evaluation as a job, and a repeated request joins it", async () => {
    largeId = await createModelDerivation(freshChain(10));
    largeJob = await queuedEvaluation(largeId);
    expect(largeJob).toMatchObject({ kind: "evaluation", state: "queued", result: null });
    const again = await queuedEvaluation(largeId);
    expect(again.id).toBe(largeJob.id);
    // Another reader's request is theirs: a job of its own.
    signInAs(kestrel.members.viewer);
    try {
      expect((await queuedEvaluation(largeId)).id).not.toBe(largeJob.id);
    } finally {
      signInAs(kestrel.members.analyst);
    }
  }, 60_000);

  it("lets only the person who queued an evaluation cancel it", async () => {
    const id = await createModelDerivation(freshChain(11));
    signInAs(kestrel.members.reviewer);
    let job: JobJson;
    try {
      // A reviewer may not simulate, but may evaluate: and cancel what they queued.
      job = await queuedEvaluation(id);
    } finally {
      signInAs(kestrel.members.analyst);
    }
    const byOther = await cancel(id, job.id);
    expect(byOther.status).toBe(403);
    expect(["queued", "running"]).toContain((await readJob(id, job.id)).state);
    signInAs(kestrel.members.reviewer);
    try {
      const response = await cancel(id, job.id);
      expect(response.status).toBe(200);
      expect(((await response.json()) as { job: JobJson }).job.state).toBe("cancelled");
    } finally {
      signInAs(kestrel.members.analyst);
    }
    cancelledEvaluation = { id, job };
  }, 60_000);

  it("queues a report file as a job, refuses its download until it completed, and cancels it", async () => {
    const { id, revisionId } = await reportFixture();
    const job = await queueReport(id, revisionId);
    expect(job).toMatchObject({ kind: "report", state: "queued" });
    const early = await download(id, job.id);
    expect(early.status).toBe(409);
    const response = await cancel(id, job.id);
    expect(response.status).toBe(200);
    cancelledReport = { id, job };
    const missing = await reportRoute.POST(
      jsonRequest(`/api/derivations/${id}/revisions/${randomUUID()}/report`, "POST", {}),
      params({ id, revisionId: randomUUID() }),
    );
    expect(missing.status).toBe(404);
  }, 60_000);

  it("runs the queued evaluation in a worker; the answer lands in the cache the request reads", async () => {
    await startWorker();
    const { job, seen } = await pollJob(largeId, largeJob.id, ended);
    expect(job.state).toBe("completed");
    expect(job.progress).toBe(1);
    expect(seen.some((j) => j.state === "running" || j.state === "completed")).toBe(true);
    expect(job.result).toMatchObject({ cached: false });
    const modelHash = String(job.result!.modelHash);
    expect(await getEvaluationByModelHash({ modelHash })).not.toBeNull();
    // Asking again, as the page does once the job completed: the cache answers at once.
    const { status, body } = await evaluate(largeId);
    expect(status).toBe(200);
    const evaluation = body as EvaluationResponse;
    expect(evaluation.cached).toBe(true);
    expect(evaluation.modelHash).toBe(modelHash);
    // The N-link chain has one equation of motion per link (one coordinate each).
    expect(evaluation.result.equations).toHaveLength(10);
  }, 240_000);

  it("keeps cancelled jobs cancelled once a worker takes jobs: nothing is run or stored for them", async () => {
    // The worker is taking jobs now; give it time to meet the cancelled ones (pg-boss dropped them; a row that ended is never started).
    await new Promise((resolve) => setTimeout(resolve, 2_000));
    const evaluation = await readJob(cancelledEvaluation.id, cancelledEvaluation.job.id);
    expect(evaluation).toMatchObject({ state: "cancelled", result: null });
    const report = await readJob(cancelledReport.id, cancelledReport.job.id);
    expect(report).toMatchObject({ state: "cancelled", result: null });
    expect((await download(cancelledReport.id, cancelledReport.job.id)).status).toBe(409);
  }, 60_000);

  it("answers a request that waits (no Prefer: respond-async) with the evaluation the worker stored", async () => {
    const id = await createModelDerivation(freshChain(10));
    const { status, body } = await evaluate(id, { async: false });
    expect(status).toBe(200);
    expect((body as EvaluationResponse).result.coordinates).toHaveLength(10);
    expect(await countJobsByDerivationId({ derivationId: id })).toEqual({ completed: 1 });
  }, 240_000);

  it("stops a running evaluation when it is cancelled, and stores nothing", async () => {
    // The largest chain the engine takes: its evaluation runs for seconds, so the cancel lands before it ends.
    const id = await createModelDerivation(freshChain(30));
    const job = await queuedEvaluation(id);
    await pollJob(id, job.id, (j) => j.state === "running" || ended(j));
    const response = await cancel(id, job.id);
    expect(response.status).toBe(200);
    const cancelled = ((await response.json()) as { job: JobJson }).job;
    expect(cancelled.state).toBe("cancelled");
    // The worker aborts at its next check (0.5 s) and terminates the engine thread; the job stays cancelled.
    await new Promise((resolve) => setTimeout(resolve, 2_000));
    expect(await readJob(id, job.id)).toMatchObject({ state: "cancelled", result: null });
    const { body } = await evaluate(id, { async: true });
    // Nothing was cached for the cancelled model: asking again queues it again.
    expect("job" in body).toBe(true);
    expect((body as { job: JobJson }).job.id).not.toBe(job.id);
    await cancel(id, (body as { job: JobJson }).job.id);
  }, 240_000);

  it("renders a revision's report as a stored HTML file with its comment threads, for any reader to download", async () => {
    const { id, revisionId } = await reportFixture();
    signInAs(kestrel.members.viewer);
    try {
      const job = await queueReport(id, revisionId);
      const { job: finished, seen } = await pollJob(id, job.id, ended, 120_000);
      expect(finished.state).toBe("completed");
      expect(seen.at(-1)!.progress).toBe(1);
      expect(finished.result).toMatchObject({ contentType: "text/html; charset=utf-8" });
      expect(finished.result!.filename).toMatch(/^hoist-stand-load-report-revision-\d+\.report\.html$/);
      storedKeys.push(String(finished.result!.objectKey));

      const response = await download(id, job.id);
      expect(response.status).toBe(200);
      expect(response.headers.get("content-type")).toBe("text/html; charset=utf-8");
      expect(response.headers.get("content-disposition")).toBe(`attachment; filename="${String(finished.result!.filename)}"`);
      expect(response.headers.get("content-security-policy")).toContain("sandbox");
      const html = await response.text();
      expect(Buffer.byteLength(html)).toBe(finished.result!.size);
      expect(html).toContain("<h1>Hoist stand load &lt;report&gt;</h1>");
      expect(html).toContain("Before the drop test");
      expect(html).toMatch(/<math[^>]*display="block"/);
      expect(html).toContain("1 open, 1 resolved");
      expect(html).toContain("Rope stretch left out on purpose?");
      expect(html).toContain("Gravity term checked against the stand drawing.");
      expect(html.indexOf("Rope stretch")).toBeLessThan(html.indexOf("Gravity term"));
      expect(html).not.toMatch(/<script/i);

      // Another member of the team may read it; they may not cancel the viewer's job.
      signInAs(kestrel.members.lead);
      expect((await download(id, job.id)).status).toBe(200);
      expect((await cancel(id, job.id)).status).toBe(403);
      // A member of another team sees nothing.
      const other = await makeTeam("Other rig");
      signInAs(other.members.lead);
      expect((await download(id, job.id)).status).toBe(404);
      expect(
        (await reportRoute.POST(jsonRequest(`/api/derivations/${id}/revisions/${revisionId}/report`, "POST", {}), params({ id, revisionId }))).status,
      ).toBe(404);
    } finally {
      signInAs(kestrel.members.analyst);
    }
  }, 240_000);

  it("removes a derivation's report files when the derivation leaves the trash for good", async () => {
    const { id, revisionId } = await reportFixture();
    const job = await queueReport(id, revisionId);
    const { job: finished } = await pollJob(id, job.id, ended, 120_000);
    expect(finished.state).toBe("completed");
    const key = String(finished.result!.objectKey);
    storedKeys.push(key);
    expect(await objectExists({ key })).toBe(true);
    expect((await derivationRoute.DELETE(jsonRequest(`/api/derivations/${id}`, "DELETE"), params({ id }))).status).toBe(204);
    signInAs(kestrel.members.lead);
    try {
      const teamId = kestrel.team.id;
      const purged = await purgeRoute.DELETE(jsonRequest(`/api/teams/${teamId}/trash/${id}`, "DELETE"), params({ teamId, derivationId: id }));
      expect(purged.status).toBe(204);
    } finally {
      signInAs(kestrel.members.analyst);
    }
    expect(await objectExists({ key })).toBe(false);
  }, 240_000);
});
