// Jobs whose every delivery died with its worker: pg-boss fails the queue
// entry on its own (each delivery expires), no handler runs, and until the
// sweep the job row (and a study whose batch it was) would show "running" for
// good. Here the queue entries are failed directly in pg-boss's table, as its
// expiry does, on a queue of the test's own that no worker takes from.
import { randomUUID } from "node:crypto";
import { sql } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeDatabase, db } from "@/db/client";
import { createDerivation } from "@/db/queries/derivations";
import { createJob, getJobById, startJobById } from "@/db/queries/jobs";
import { createStudyWithRuns, getStudyById, getStudyRunsByStudyId } from "@/db/queries/studies";
import { closeJobQueue, createBoss } from "@/lib/jobs/boss";
import { sweepAbandonedJobs } from "@/lib/jobs/sweep";
import { blankDocument } from "@/lib/notebook/document";
import { makeTeam, resetDatabase, type TeamFixture } from "./support/fixtures";

const QUEUE = "holonomy-sweep-test";
const boss = createBoss({ maintenance: false });
let kestrel: TeamFixture;
let derivationId: string;

/** A job row taken by a worker, and its pg-boss entry in the given state. */
async function jobWithQueueEntry(kind: "simulation" | "study", input: Record<string, unknown>, queueState: "failed" | "active") {
  const id = randomUUID();
  await createJob({ job: { id, derivationId, kind, input, createdById: kestrel.members.analyst.id } });
  await startJobById({ id, worker: "rig-host-gone:4242" });
  await boss.send(QUEUE, { jobId: id }, { id });
  await db.execute(sql`update pgboss.job set state = ${queueState} where id = ${id}`);
  return id;
}

beforeAll(async () => {
  await resetDatabase();
  kestrel = await makeTeam("Kestrel sweep cell");
  const derivation = await createDerivation({
    teamId: kestrel.team.id,
    title: "Trolley sway",
    ownerId: kestrel.members.analyst.id,
    content: blankDocument("Trolley sway"),
  });
  derivationId = derivation.id;
  await boss.start();
  if (!(await boss.getQueue(QUEUE))) await boss.createQueue(QUEUE, { name: QUEUE });
});

afterAll(async () => {
  await boss.stop({ graceful: false, wait: true });
  await closeJobQueue();
  await closeDatabase();
});

describe("sweeping abandoned jobs", () => {
  it("ends a job and the study of a batch that pg-boss failed, and leaves a job that is still active", async () => {
    const studyId = randomUUID();
    // The study's spec and settings are not read by the sweep: a minimal record of them.
    await createStudyWithRuns({
      study: {
        id: studyId,
        derivationId,
        cellId: "trolleystudy",
        state: "running",
        mode: "grid",
        settings: {} as never,
        spec: {} as never,
        content: blankDocument("Trolley sway") as unknown as Record<string, unknown>,
        modelHash: "sweep-test",
        total: 3,
      },
      runs: [0, 1, 2].map((runIndex) => ({ runIndex, caseIndex: 0, caseName: "hard start", parameters: { l: 6 + runIndex } })),
    });
    const lostRun = await jobWithQueueEntry("simulation", {}, "failed");
    const lostBatch = await jobWithQueueEntry("study", { studyId, from: 0, to: 3 }, "failed");
    const alive = await jobWithQueueEntry("simulation", {}, "active");

    await sweepAbandonedJobs();

    for (const id of [lostRun, lostBatch]) {
      const job = await getJobById({ id });
      expect(job?.state).toBe("failed");
      expect(job?.error?.code).toBe("internal:job");
      expect(job?.error?.message).toMatch(/stopped before finishing it/);
    }
    expect((await getJobById({ id: alive }))?.state).toBe("running");
    const study = await getStudyById({ id: studyId });
    expect(study?.state).toBe("failed");
    expect(study?.error).toMatchObject({ code: "internal:study" });
    expect(study?.error?.message).toMatch(/runs stored before are kept/);
    expect(await getStudyRunsByStudyId({ studyId })).toHaveLength(3);
    // Nothing is left to sweep: a second pass (or another worker's) ends nothing.
    expect(await sweepAbandonedJobs()).toBe(0);
  });
});
