import type { ChildProcess } from "node:child_process";
import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";

vi.mock("@/lib/auth/session", async () => (await import("./support/session")).sessionModule);

import * as jobRoute from "@/app/api/derivations/[id]/jobs/[jobId]/route";
import * as runRoute from "@/app/api/derivations/[id]/runs/[runId]/route";
import * as studiesRoute from "@/app/api/derivations/[id]/studies/route";
import * as studyRoute from "@/app/api/derivations/[id]/studies/[studyId]/route";
import * as cancelRoute from "@/app/api/derivations/[id]/studies/[studyId]/cancel/route";
import * as csvRoute from "@/app/api/derivations/[id]/studies/[studyId]/csv/route";
import * as openRoute from "@/app/api/derivations/[id]/studies/[studyId]/runs/[index]/open/route";
import { sql } from "drizzle-orm";
import { closeDatabase, db } from "@/db/client";
import { createDerivation, getDerivationById } from "@/db/queries/derivations";
import { createCheckpoint } from "@/db/queries/revisions";
import { getJobById } from "@/db/queries/jobs";
import { getOpenStudyJobsByStudyId } from "@/db/queries/studies";
import { revisionReport } from "@/lib/history/views";
import { closeJobQueue } from "@/lib/jobs/boss";
import { closeEnginePool } from "@/lib/workers/engine-pool";
import type { JobJson } from "@/lib/jobs/views";
import type { Model } from "@/lib/mechanics";
import { DEFAULT_STUDY_SETTINGS, createCell, modelToDocument, type StudySettings } from "@/lib/notebook/document";
import type { RunJson } from "@/lib/runs/views";
import type { StudyListItem, StudyView } from "@/lib/studies/views";
import { jsonRequest, makeTeam, params, resetDatabase, type TeamFixture } from "./support/fixtures";
import { startWorkerProcess, stopWorkerProcess } from "./support/worker-process";
import { signInAs } from "./support/session";

// Studies queued here (route handlers in this process) are run by queue worker
// processes (scripts/worker.ts), as the start scripts run them.

// A hook block on a rope from a fixed sheave, in Cartesian coordinates with the rope as a constraint.
const hook: Model = {
  title: "Hook block on a rope",
  coordinates: [
    { name: "x", unit: "m" },
    { name: "y", unit: "m" },
  ],
  parameters: [
    { name: "m", unit: "kg", value: 10 },
    { name: "l", unit: "m", value: 2 },
    { name: "g", unit: "m/s^2", value: 9.81 },
  ],
  inputs: [{ name: "F", unit: "N" }],
  kinetic: "1/2*m*(x'^2 + y'^2)",
  potential: "m*g*y",
  forces: { x: "F" },
  constraints: [{ name: "rope", expr: "x^2 + y^2 - l^2" }],
  outputs: [{ name: "tension", expr: "-2*l*lambda_rope", unit: "N" }],
};

let kestrel: TeamFixture;
const workers: ChildProcess[] = [];

const startWorker = () => startWorkerProcess(workers);
const stopWorker = stopWorkerProcess;

/** A derivation of the hook model with one study cell holding `settings`. */
async function studyDerivation(settings: Partial<StudySettings>): Promise<{ id: string; cellId: string }> {
  const document = modelToDocument(hook);
  const cell = createCell("study", "hook-study");
  cell.settings = { ...structuredClone(DEFAULT_STUDY_SETTINGS), ...settings };
  const derivation = await createDerivation({
    teamId: kestrel.team.id,
    title: hook.title,
    ownerId: kestrel.members.analyst.id,
    content: { ...document, cells: [...document.cells, cell] },
  });
  return { id: derivation.id, cellId: cell.id };
}

async function queueStudy(id: string, cellId: string): Promise<Response> {
  return studiesRoute.POST(jsonRequest(`/api/derivations/${id}/studies`, "POST", { cellId }), params({ id }));
}

async function readStudy(id: string, studyId: string): Promise<StudyView> {
  const response = await studyRoute.GET(jsonRequest(`/api/derivations/${id}/studies/${studyId}`, "GET"), params({ id, studyId }));
  expect(response.status).toBe(200);
  return ((await response.json()) as { study: StudyView }).study;
}

async function pollStudy(id: string, studyId: string, done: (study: StudyView) => boolean, timeoutMs = 180_000): Promise<StudyView> {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const study = await readStudy(id, studyId);
    if (done(study)) return study;
    if (Date.now() > deadline) throw new Error(`study ${studyId} is still ${study.state} (${JSON.stringify(study.progress)})`);
    await new Promise((resolve) => setTimeout(resolve, 250));
  }
}

const ended = (study: StudyView) => ["completed", "failed", "cancelled"].includes(study.state);

// Released from rest at θ0, the rope tension at the bottom of the swing is m g (3 − 2 cos θ0), whatever the
// rope's length (energy conservation with the centripetal force at the lowest point; fact of the trade).
const bottomTension = (m: number, x0: number, y0: number) => m * 9.81 * (3 - (2 * -y0) / Math.hypot(x0, y0));

const releases = [
  // The start is projected radially onto the rope's circle, so the release angle atan(x0/−y0) holds for every l.
  { name: "wide swing", initialCoordinates: { x: "0.5", y: "-1.9" }, initialRates: {}, inputs: {} },
  { name: "small swing", initialCoordinates: { x: "0.2", y: "-1.9" }, initialRates: {}, inputs: {} },
];

beforeAll(async () => {
  await resetDatabase();
  kestrel = await makeTeam("Kestrel study rig");
  signInAs(kestrel.members.analyst);
  await startWorker();
}, 120_000);

afterAll(async () => {
  await Promise.all(workers.map(stopWorker));
  await closeJobQueue();
  await closeEnginePool();
  await closeDatabase();
}, 60_000);

describe("parameter studies through the queue", () => {
  it("runs a grid study to completion: worst case, sensitivity, envelope and CSV", async () => {
    const { id, cellId } = await studyDerivation({
      parameters: [
        { name: "l", values: "1, 2", distribution: "uniform", min: "", max: "", mean: "", sd: "" },
        { name: "m", values: "5:10:2", distribution: "uniform", min: "", max: "", mean: "", sd: "" },
      ],
      cases: releases,
      endTime: "2",
      outputStep: "0.002",
      watch: ["tension", "lambda_rope", "x"],
    });
    const response = await queueStudy(id, cellId);
    expect(response.status).toBe(202);
    const queued = ((await response.json()) as { study: StudyView }).study;
    expect(queued.progress).toMatchObject({ total: 8, done: 0, failed: 0 });
    expect(queued.runs.every((run) => run.status === "pending")).toBe(true);

    const study = await pollStudy(id, queued.id, ended);
    expect(study.state).toBe("completed");
    expect(study.progress).toMatchObject({ total: 8, done: 8, failed: 0, etaSeconds: null });
    expect(study.parameterNames).toEqual(["l", "m"]);
    expect(study.caseNames).toEqual(["wide swing", "small swing"]);
    // The multiplier's unit comes from the derivation once a worker has derived it.
    expect(study.watch.find((w) => w.name === "lambda_rope")!.unit).toBeTruthy();

    const worst = study.worst.tension!;
    expect(worst.caseName).toBe("wide swing");
    expect(worst.parameters.m).toBe(10);
    expect(worst.value).toBeCloseTo(bottomTension(10, 0.5, -1.9), 1);
    // Finite differences along m: g (3 − 2 cos θ0) per kg in each case, averaged over the grid's four lines;
    // along l: none (the bottom tension does not depend on the rope's length).
    const sensitivity = study.sensitivity.tension!;
    expect(sensitivity.method).toBe("finite-difference");
    const perKg = (bottomTension(1, 0.5, -1.9) + bottomTension(1, 0.2, -1.9)) / 2;
    expect(sensitivity.byParameter.m!.slope).toBeCloseTo(perKg, 1);
    expect(Math.abs(sensitivity.byParameter.l!.slope)).toBeLessThan(0.05);

    expect(study.envelope!.time.length).toBeLessThanOrEqual(500);
    expect(study.envelope!.time.at(-1)).toBe(2);
    const band = study.envelope!.series.tension!;
    expect(Math.max(...band.max)).toBeLessThanOrEqual(worst.value + 1e-3);
    expect(band.min.every((v, k) => v <= band.p50[k]! && band.p50[k]! <= band.max[k]!)).toBe(true);

    const csv = await csvRoute.GET(jsonRequest(`/api/derivations/${id}/studies/${study.id}/csv`, "GET"), params({ id, studyId: study.id }));
    expect(csv.status).toBe(200);
    expect(csv.headers.get("content-type")).toContain("text/csv");
    const lines = (await csv.text()).trim().split("\n");
    expect(lines).toHaveLength(9);
    expect(lines[0]).toContain("run,case,l [m],m [kg],status,failure,tension peak [N]");

    const list = await studiesRoute.GET(jsonRequest(`/api/derivations/${id}/studies?cellId=${cellId}`, "GET"), params({ id }));
    const items = ((await list.json()) as { studies: StudyListItem[] }).studies;
    expect(items.map((item) => item.id)).toEqual([study.id]);
    expect(items[0]).not.toHaveProperty("runs");
  }, 300_000);

  it("prints the latest completed study in the report of the revision it ran on", async () => {
    const { id, cellId } = await studyDerivation({
      parameters: [{ name: "m", values: "5, 10", distribution: "uniform", min: "", max: "", mean: "", sd: "" }],
      cases: [releases[0]!],
      endTime: "1",
      outputStep: "0.005",
      watch: ["tension"],
    });
    const checkpoint = await createCheckpoint({ derivationId: id, name: "Before the study", actorId: kestrel.members.analyst.id });
    if (!checkpoint.ok) throw new Error("checkpoint refused");
    const queued = ((await (await queueStudy(id, cellId)).json()) as { study: StudyView }).study;
    expect(queued.revisionId).toBe(checkpoint.revision.id);
    await pollStudy(id, queued.id, ended);
    const report = await revisionReport((await getDerivationById({ id }))!, checkpoint.revision.id);
    expect(report.studies).toHaveLength(1);
    const [study] = report.studies;
    expect(study).toMatchObject({ cellId, mode: "grid", total: 2, done: 2, failed: 0, failedRuns: [], onThisRevision: true, cases: ["wide swing"] });
    expect(study!.worst).toEqual([expect.objectContaining({ name: "tension", unit: "N", caseName: "wide swing", parameters: { m: 10 } })]);
    expect(study!.worst[0]!.value).toBeCloseTo(bottomTension(10, 0.5, -1.9), 1);
    // One pair along m: the slope is the bottom tension per kg, g (3 − 2 cos θ0).
    expect(study!.sensitivity[0]!.byParameter.m!.slope).toBeCloseTo(bottomTension(1, 0.5, -1.9), 1);
  }, 300_000);

  it("opens one run of a study as an ordinary server simulation", async () => {
    const { id, cellId } = await studyDerivation({
      parameters: [{ name: "m", values: "4, 8", distribution: "uniform", min: "", max: "", mean: "", sd: "" }],
      cases: [releases[0]!],
      endTime: "1",
      outputStep: "0.01",
      watch: ["tension"],
    });
    const queued = ((await (await queueStudy(id, cellId)).json()) as { study: StudyView }).study;
    await pollStudy(id, queued.id, ended);
    const opened = await openRoute.POST(
      jsonRequest(`/api/derivations/${id}/studies/${queued.id}/runs/1/open`, "POST"),
      params({ id, studyId: queued.id, index: "1" }),
    );
    expect(opened.status).toBe(202);
    const { job } = (await opened.json()) as { job: JobJson };
    expect(job.kind).toBe("simulation");
    let finished = job;
    for (let i = 0; i < 600 && !["completed", "failed", "cancelled"].includes(finished.state); i++) {
      await new Promise((resolve) => setTimeout(resolve, 250));
      const read = await jobRoute.GET(jsonRequest(`/api/derivations/${id}/jobs/${job.id}`, "GET"), params({ id, jobId: job.id }));
      finished = ((await read.json()) as { job: JobJson }).job;
    }
    expect(finished.state).toBe("completed");
    const runId = String(finished.result!.runId);
    const run = ((await (await runRoute.GET(jsonRequest(`/api/derivations/${id}/runs/${runId}`, "GET"), params({ id, runId }))).json()) as { run: RunJson })
      .run;
    expect(run.settings.label).toBe("Study run 1 (wide swing)");
    expect(run.summary.parameterValues?.m).toBe(8);
  }, 300_000);

  it("records a failed run and completes the study without it", async () => {
    // A massless hook block has a singular mass matrix: the simulator refuses that run at its start; the others run.
    const { id, cellId } = await studyDerivation({
      parameters: [{ name: "m", values: "0, 10", distribution: "uniform", min: "", max: "", mean: "", sd: "" }],
      cases: [releases[0]!],
      endTime: "1",
      outputStep: "0.01",
      watch: ["tension"],
    });
    const queued = ((await (await queueStudy(id, cellId)).json()) as { study: StudyView }).study;
    const study = await pollStudy(id, queued.id, ended);
    expect(study.state).toBe("completed");
    expect(study.progress).toMatchObject({ total: 2, done: 1, failed: 1 });
    const failed = study.runs.find((run) => run.status === "failed")!;
    expect(failed.parameters.m).toBe(0);
    expect(failed.failure!.reason).toBe("setup");
    expect(failed.failure!.message).toMatch(/singular/);
    expect(study.worst.tension!.parameters.m).toBe(10);

    // The report lists the failed run with its reason.
    const checkpoint = await createCheckpoint({ derivationId: id, name: "After the study", actorId: kestrel.members.analyst.id });
    if (!checkpoint.ok) throw new Error("checkpoint refused");
    const report = await revisionReport((await getDerivationById({ id }))!, checkpoint.revision.id);
    expect(report.studies[0]).toMatchObject({ total: 2, done: 1, failed: 1, onThisRevision: false });
    expect(report.studies[0]!.failedRuns).toEqual([
      { index: failed.index, caseName: "wide swing", parameters: { m: 0 }, reason: "setup", message: failed.failure!.message },
    ]);
  }, 300_000);

  it("shows partial results while running and stops the remaining batches on cancel", async () => {
    const { id, cellId } = await studyDerivation({
      mode: "tolerance",
      samples: "400",
      seed: "3",
      parameters: [{ name: "m", values: "", distribution: "normal", mean: "10", sd: "1", min: "8", max: "12" }],
      cases: [releases[0]!],
      endTime: "4",
      outputStep: "0.01",
      watch: ["tension"],
    });
    const queued = ((await (await queueStudy(id, cellId)).json()) as { study: StudyView }).study;
    const partial = await pollStudy(id, queued.id, (s) => s.progress.done >= 3 || ended(s));
    expect(partial.state).toBe("running");
    expect(partial.envelope).not.toBeNull();
    expect(partial.worst.tension).toBeDefined();
    expect(partial.progress.etaSeconds).not.toBeNull();

    const response = await cancelRoute.POST(jsonRequest(`/api/derivations/${id}/studies/${queued.id}/cancel`, "POST"), params({ id, studyId: queued.id }));
    expect(response.status).toBe(200);
    expect(((await response.json()) as { study: StudyView }).study.state).toBe("cancelled");
    expect(await getOpenStudyJobsByStudyId({ studyId: queued.id })).toEqual([]);
    // Within a second or two the worker stops; nothing more is stored after that.
    await new Promise((resolve) => setTimeout(resolve, 2500));
    const settled = await readStudy(id, queued.id);
    await new Promise((resolve) => setTimeout(resolve, 2500));
    const later = await readStudy(id, queued.id);
    expect(later.state).toBe("cancelled");
    expect(later.progress.done).toBe(settled.progress.done);
    expect(later.progress.done).toBeLessThan(400);
    expect(later.runs.filter((run) => run.status === "pending").length).toBe(400 - later.progress.done - later.progress.failed);
  }, 300_000);

  it("fails the study with its reason when a batch keeps meeting a database error, keeping the stored runs", async () => {
    // Eight runs go in four batches of two (batchSizeOf). A trigger makes the database refuse to store run 2 of
    // this derivation's study, as a broken or full database would: the batch of runs 2–3 fails on every delivery.
    const { id, cellId } = await studyDerivation({
      parameters: [{ name: "m", values: "3:10:8", distribution: "uniform", min: "", max: "", mean: "", sd: "" }],
      cases: [releases[1]!],
      endTime: "0.5",
      outputStep: "0.01",
      watch: ["tension"],
    });
    // A sequence counts the attempts: nextval is not rolled back with the failing statement.
    await db.execute(sql.raw("CREATE SEQUENCE test_study_fault_hits"));
    await db.execute(
      sql.raw(`CREATE FUNCTION test_study_fault() RETURNS trigger LANGUAGE plpgsql AS $$
        BEGIN
          IF OLD.run_index = 2 AND OLD.study_id IN (SELECT s.id FROM studies s WHERE s.derivation_id = '${id}') THEN
            PERFORM nextval('test_study_fault_hits');
            RAISE EXCEPTION 'injected fault: the run cannot be stored';
          END IF;
          RETURN NEW;
        END $$`),
    );
    await db.execute(sql.raw("CREATE TRIGGER test_study_fault BEFORE UPDATE ON study_runs FOR EACH ROW EXECUTE FUNCTION test_study_fault()"));
    try {
      const queued = ((await (await queueStudy(id, cellId)).json()) as { study: StudyView }).study;
      expect(queued.progress.total).toBe(8);
      const study = await pollStudy(id, queued.id, ended);
      expect(study.state).toBe("failed");
      expect(study.error).toEqual({
        code: "internal:study",
        message: "Runs 2–3 could not be completed: the server met an unexpected error. The study was stopped; the runs stored before are kept.",
      });
      // The queue's retry policy (retryLimit 2, lib/jobs/queue.ts): three deliveries, and the study failed only after the last.
      const [hits] = (await db.execute(sql.raw("SELECT last_value::int AS hits FROM test_study_fault_hits"))).rows as { hits: number }[];
      expect(hits!.hits).toBe(3);
      const batches = (await db.execute(sql`SELECT id FROM jobs WHERE kind = 'study' AND input->>'studyId' = ${queued.id} AND input->>'from' = '2'`)).rows as {
        id: string;
      }[];
      expect(batches).toHaveLength(1);
      const batch = await getJobById({ id: batches[0]!.id });
      expect(batch).toMatchObject({ state: "failed", error: { code: "internal:job" } });
      expect(await getOpenStudyJobsByStudyId({ studyId: queued.id })).toEqual([]);

      // The first batch ran before the failing one (one worker, batches in order): its runs are stored and stay.
      const byIndex = new Map(study.runs.map((run) => [run.index, run]));
      expect(byIndex.get(0)!.status).toBe("done");
      expect(byIndex.get(1)!.status).toBe("done");
      expect(byIndex.get(2)!.status).toBe("pending");
      expect(study.runs.filter((run) => run.status === "done")).toHaveLength(study.progress.done);
      expect(study.worst.tension).toBeDefined();
      await new Promise((resolve) => setTimeout(resolve, 1500));
      const later = await readStudy(id, queued.id);
      expect(later.state).toBe("failed");
      expect(later.progress).toEqual(study.progress);
      expect(later.runs.filter((run) => run.status === "done").map((run) => run.index)).toEqual(
        study.runs.filter((run) => run.status === "done").map((run) => run.index),
      );
    } finally {
      await db.execute(sql.raw("DROP TRIGGER test_study_fault ON study_runs"));
      await db.execute(sql.raw("DROP FUNCTION test_study_fault()"));
      await db.execute(sql.raw("DROP SEQUENCE test_study_fault_hits"));
    }
  }, 300_000);

  it("refuses a study cell that cannot run, naming each field", async () => {
    const { id, cellId } = await studyDerivation({
      parameters: [{ name: "k", values: "1", distribution: "uniform", min: "", max: "", mean: "", sd: "" }],
      cases: [{ name: "bad", initialCoordinates: { theta: "1" }, initialRates: {}, inputs: {} }],
      watch: ["speed"],
    });
    const response = await queueStudy(id, cellId);
    expect(response.status).toBe(400);
    const { error } = (await response.json()) as { error: { code: string; fieldErrors: Record<string, string[]> } };
    expect(error.code).toBe("bad_request:study");
    expect(Object.keys(error.fieldErrors).sort()).toEqual(["cases.0.initialCoordinates.theta", "parameters.0.name", "watch.0"]);
    expect((await queueStudy(id, "no-such-cell")).status).toBe(404);
  });

  it("answers bad requests with a 4xx JSON error and records nothing", async () => {
    const { id, cellId } = await studyDerivation({ cases: [releases[1]!], endTime: "0.5", watch: ["x"] });
    const path = `/api/derivations/${id}/studies`;
    const refused = async (request: Request) => {
      const response = await studiesRoute.POST(request, params({ id }));
      expect(response.headers.get("content-type")).toContain("application/json");
      const { error } = (await response.json()) as { error: { code: string; message: string; fieldErrors?: Record<string, string[]> } };
      return { status: response.status, ...error };
    };
    expect(await refused(jsonRequest(path, "POST", '{"cellId":'))).toMatchObject({ status: 400, message: "The request body is not valid JSON." });
    expect(
      await refused(new Request(`http://localhost${path}`, { method: "POST", headers: { "content-type": "text/plain" }, body: JSON.stringify({ cellId }) })),
    ).toMatchObject({ status: 415, code: "unsupported_media_type:api" });
    // The body names one cell: a 5 kB one is refused unread.
    expect(await refused(jsonRequest(path, "POST", { cellId, padding: "x".repeat(5000) }))).toMatchObject({ status: 413, code: "too_large:api" });

    // Bounds whose span is past the largest number would sample infinite values: refused by field, not run.
    const wide = await studyDerivation({
      mode: "tolerance",
      samples: "10",
      parameters: [{ name: "m", values: "", distribution: "uniform", mean: "", sd: "", min: "-1e308", max: "1e308" }],
      cases: [releases[1]!],
      endTime: "0.5",
      watch: ["x"],
    });
    const response = await queueStudy(wide.id, wide.cellId);
    expect(response.status).toBe(400);
    const { error } = (await response.json()) as { error: { code: string; fieldErrors: Record<string, string[]> } };
    expect(error).toMatchObject({ code: "bad_request:study", fieldErrors: { "parameters.0.max": ["The bounds are too far apart to sample between."] } });

    for (const derivation of [{ id, cellId }, wide]) {
      const list = await studiesRoute.GET(
        jsonRequest(`/api/derivations/${derivation.id}/studies?cellId=${derivation.cellId}`, "GET"),
        params({ id: derivation.id }),
      );
      expect(((await list.json()) as { studies: StudyListItem[] }).studies).toEqual([]);
    }
  });

  it("lets a viewer read a study but not run or cancel one", async () => {
    const { id, cellId } = await studyDerivation({ cases: [releases[1]!], endTime: "0.5", watch: ["x"] });
    const queued = ((await (await queueStudy(id, cellId)).json()) as { study: StudyView }).study;
    signInAs(kestrel.members.viewer);
    try {
      expect((await queueStudy(id, cellId)).status).toBe(403);
      const cancel = await cancelRoute.POST(jsonRequest(`/api/derivations/${id}/studies/${queued.id}/cancel`, "POST"), params({ id, studyId: queued.id }));
      expect(cancel.status).toBe(403);
      expect((await readStudy(id, queued.id)).id).toBe(queued.id);
    } finally {
      signInAs(kestrel.members.analyst);
    }
    expect((await pollStudy(id, queued.id, ended)).state).toBe("completed");
  }, 300_000);
});
