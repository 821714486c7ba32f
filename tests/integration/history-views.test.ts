import { afterAll, beforeAll, beforeEach, describe, expect, it, vi } from "vitest";

vi.mock("@/lib/auth/session", async () => (await import("./support/session")).sessionModule);

import * as approveRoute from "@/app/api/derivations/[id]/approve/route";
import * as reviewDecisionRoute from "@/app/api/derivations/[id]/review/decision/route";
import * as reviewRoute from "@/app/api/derivations/[id]/review/route";
import * as runsRoute from "@/app/api/derivations/[id]/runs/route";
import * as unlockRoute from "@/app/api/derivations/[id]/unlock/route";
import { closeDatabase } from "@/db/client";
import { createDerivation, getDerivationById } from "@/db/queries/derivations";
import type { Derivation } from "@/db/schema";
import type { SessionUser } from "@/lib/auth/session";
import { compareRevisionDocuments, compareRevisionEquations, derivationHistory, revisionPair, revisionReport } from "@/lib/history/views";
import type { Model } from "@/lib/mechanics";
import { modelToDocument, type DerivationDocument } from "@/lib/notebook/document";
import { reviewPanelData } from "@/lib/review/panel-data";
import { closeEnginePool } from "@/lib/workers/engine-pool";
import { closeSimulationPool } from "@/lib/workers/simulation-pool";
import { storeContentAs } from "./support/content";
import { jsonRequest, makeTeam, params, resetDatabase, type TeamFixture } from "./support/fixtures";
import { signInAs, signOut } from "./support/session";

let kestrel: TeamFixture;

// A cable length unique to this run keeps the engine's cache from answering for an earlier run.
const cable = 3 + Math.round(Math.random() * 1e6) / 1e6;

function hookBlock(damping: boolean): DerivationDocument {
  const model: Model = {
    title: "Hook block on the test hoist",
    coordinates: [{ name: "theta", unit: "rad", description: "cable angle from the vertical" }],
    parameters: [
      { name: "m", unit: "kg", value: 40, description: "hook block mass" },
      { name: "l", unit: "m", value: cable, description: "cable length" },
      { name: "g", unit: "m/s^2", value: 9.81, description: "gravitational acceleration" },
      ...(damping ? [{ name: "c", unit: "N*m*s/rad", value: 6, description: "sheave friction" }] : []),
    ],
    kinetic: "1/2*m*l^2*theta'^2",
    potential: "-m*g*l*cos(theta)",
    ...(damping ? { dissipation: "1/2*c*theta'^2" } : {}),
  };
  let n = 0;
  return modelToDocument(model, () => `h${(n += 1)}`);
}

async function as<T>(user: SessionUser, call: () => Promise<T>): Promise<T> {
  signInAs(user);
  return call();
}

async function post(
  route: { POST: (request: Request, context: { params: Promise<{ id: string }> }) => Promise<Response> },
  user: SessionUser,
  path: string,
  id: string,
  body: unknown,
) {
  const response = await as(user, () => route.POST(jsonRequest(`/api/derivations/${id}/${path}`, "POST", body), params({ id })));
  return { status: response.status, body: await response.json() };
}

async function save(user: SessionUser, id: string, document: DerivationDocument) {
  expect((await storeContentAs(user, id, document)).status).toBe("saved");
}

async function reload(id: string): Promise<Derivation> {
  return (await getDerivationById({ id }))!;
}

beforeAll(async () => {
  await resetDatabase();
  kestrel = await makeTeam("Kestrel history bay");
});
beforeEach(() => signOut());
afterAll(async () => {
  await closeEnginePool();
  await closeSimulationPool();
  await closeDatabase();
});

describe("history, comparison, review panel and report", () => {
  it("follows a derivation from a first review through changes, approval and unlock", async () => {
    const { analyst, reviewer, lead } = kestrel.members;
    const created = await createDerivation({ teamId: kestrel.team.id, title: "Hook block on the test hoist", ownerId: analyst.id, content: hookBlock(false) });
    const id = created.id;

    // The analyst saves and asks for review: revision 1.
    await save(analyst, id, hookBlock(false));
    const first = await post(reviewRoute, analyst, "review", id, { reviewerIds: [reviewer.id] });
    expect(first.status).toBe(201);
    let panel = await reviewPanelData({ derivation: await reload(id), membership: { role: "reviewer" }, userId: reviewer.id });
    expect(panel).toMatchObject({
      status: "in_review",
      latest: { number: 1 },
      currentIsLatest: true,
      request: { open: true, revisionNumber: 1, reviewers: [{ id: reviewer.id, decision: "pending" }] },
    });
    expect(panel.can).toEqual({ requestReview: false, review: true, approve: false, unlock: false });
    // Nobody may be asked to review their own request; the reviewer sees the analyst's choice of people.
    expect(panel.candidates.map((candidate) => candidate.id).sort()).toEqual([lead.id].sort());

    // Changes requested, the analyst adds the sheave friction and asks again: revision 2.
    expect(
      (await post(reviewDecisionRoute, reviewer, "review/decision", id, { decision: "changes_requested", comment: "Add the sheave friction." })).status,
    ).toBe(200);
    await save(analyst, id, hookBlock(true));
    panel = await reviewPanelData({ derivation: await reload(id), membership: { role: "lead" }, userId: lead.id });
    expect(panel.status).toBe("draft");
    expect(panel.currentIsLatest).toBe(false);
    expect(panel.request).toMatchObject({ open: false, reviewers: [{ decision: "changes_requested", comment: "Add the sheave friction." }] });
    const second = await post(reviewRoute, analyst, "review", id, { reviewerIds: [reviewer.id, lead.id] });
    expect(second.body.revision.number).toBe(2);

    // A stored run of revision 2's model, for the report.
    const run = await post(runsRoute, reviewer, "runs", id, { initialCoordinates: { theta: 0.2 }, endTime: 2, outputStep: 0.01 });
    expect(run.status).toBe(201);

    // The comparison: the dissipation cell as text, the friction parameter in the table, one new term.
    const derivation = await reload(id);
    const pair = (await revisionPair(derivation, { from: 1, to: 2 }))!;
    expect([pair.fromView.number, pair.toView.number]).toEqual([1, 2]);
    expect(pair.toView.authorNames).toEqual([analyst.name]);
    const documents = compareRevisionDocuments(pair.from, pair.to);
    if (!documents.ok) throw new Error(documents.message);
    const dissipation = documents.comparison.cells.find((cell) => cell.kind === "dissipation")!;
    // The model without friction had no dissipation cell.
    expect(dissipation.status).toBe("added");
    expect(dissipation.lines).toEqual([{ kind: "added", text: "1/2*c*theta'^2" }]);
    expect(documents.comparison.parameters.filter((change) => change.status !== "unchanged")).toEqual([
      { status: "added", before: null, after: expect.objectContaining({ name: "c", value: "6", unit: "N*m*s/rad" }), fields: [] },
    ]);
    const equations = await compareRevisionEquations(documents.before, documents.after, { from: 1, to: 2 });
    if (!equations.ok) throw new Error(equations.message);
    // Rayleigh's dissipation function D = ½cθ'² adds cθ' to the θ equation
    // (Goldstein, Poole & Safko, Classical Mechanics, 3rd ed., §1.5).
    expect(equations.equations).toHaveLength(1);
    expect(equations.equations[0]!.terms.map((term) => (term.status === "changed" ? "changed" : `${term.status}:${term.term.text}`))).toEqual([
      "unchanged:m*l^2*theta''",
      "added:c*theta'",
      "unchanged:m*l*g*sin(theta)",
    ]);

    // The reviewer signs off; the lead, who made no change, approves revision 2.
    expect((await post(reviewDecisionRoute, reviewer, "review/decision", id, { decision: "signed_off", comment: "" })).status).toBe(200);
    panel = await reviewPanelData({ derivation: await reload(id), membership: { role: "lead" }, userId: lead.id });
    expect(panel.can.approve).toBe(true);
    expect(panel.latest).toMatchObject({ number: 2, authorIds: [analyst.id] });
    const approved = await post(approveRoute, lead, "approve", id, { revisionId: pair.to.id });
    expect(approved.status).toBe(200);

    panel = await reviewPanelData({ derivation: await reload(id), membership: { role: "lead" }, userId: lead.id });
    expect(panel.lock).toMatchObject({ revisionId: pair.to.id, revisionNumber: 2, contentHash: pair.to.contentHash, approvedByName: lead.name });
    expect(panel.can).toEqual({ requestReview: false, review: false, approve: false, unlock: true });
    expect(panel.reportRevisionId).toBe(pair.to.id);
    const analystPanel = await reviewPanelData({ derivation: await reload(id), membership: { role: "analyst" }, userId: analyst.id });
    expect(analystPanel.can.unlock).toBe(false);

    // The report of revision 2: the model, its equations and frequency, the run, the reviews and the approval.
    const report = await revisionReport(await reload(id), pair.to.id);
    expect(report.revision).toMatchObject({ number: 2, contentHash: pair.to.contentHash });
    expect(report.changedSince).toBe(false);
    if (!report.evaluation.ok) throw new Error(report.evaluation.message);
    expect(report.evaluation.result.massMatrix).toEqual([["m*l^2"]]);
    const frequencies = (report.evaluation.result.linearization?.selected?.modes ?? []).flatMap((mode) => (mode.kind === "oscillating" ? [mode.hertz!] : []));
    // A damped pendulum about the hanging position: lightly damped, its undamped frequency is
    // √(g/l)/2π (fact of the trade); c = 6 N·m·s/rad barely shifts it for a 40 kg block.
    expect(frequencies[0]).toBeCloseTo(Math.sqrt(9.81 / cable) / (2 * Math.PI), 2);
    expect(report.runs).toHaveLength(1);
    expect(report.runs[0]).toMatchObject({ status: "completed", createdByName: reviewer.name });
    expect(report.runs[0]!.trajectory?.coordinateNames).toEqual(["theta"]);
    expect(report.runs[0]!.trajectory!.times.length).toBeLessThanOrEqual(601);
    expect(report.otherRuns).toBe(0);
    expect(report.review?.reviewers.map((entry) => `${entry.reviewerName}:${entry.decision}`).sort()).toEqual(
      [`${lead.name}:pending`, `${reviewer.name}:signed_off`].sort(),
    );
    expect(report.approvals).toEqual([expect.objectContaining({ approvedByName: lead.name, contentHash: pair.to.contentHash, unlockedAt: null })]);

    // Revision 1 used another model: the run is counted, not shown, and it was never approved.
    const firstReport = await revisionReport(await reload(id), pair.from.id);
    expect(firstReport.runs).toHaveLength(0);
    expect(firstReport.otherRuns).toBe(1);
    expect(firstReport.approvals).toEqual([]);
    expect(firstReport.changedSince).toBe(true);

    // Unlocked with a reason: the history keeps the approval with who unlocked it and why.
    expect((await post(unlockRoute, lead, "unlock", id, { reason: "Sheave friction to be measured on the rig." })).status).toBe(200);
    const history = await derivationHistory(await reload(id));
    expect(history.revisions.map((revision) => revision.number)).toEqual([2, 1]);
    expect(history.revisions[0]!.approvals).toEqual([
      expect.objectContaining({ approvedByName: lead.name, unlockedByName: lead.name, unlockReason: "Sheave friction to be measured on the rig." }),
    ]);
    expect(history.lockedRevisionId).toBeNull();
    expect(history.unrevisedChanges).toBe(false);
    const unlockedPanel = await reviewPanelData({ derivation: await reload(id), membership: { role: "analyst" }, userId: analyst.id });
    expect(unlockedPanel.lock).toBeNull();
    expect(unlockedPanel.can.requestReview).toBe(true);

    // An edit after the unlock is not in a revision yet.
    await save(analyst, id, { ...hookBlock(true), title: "Hook block on the test hoist, measured friction" });
    expect((await derivationHistory(await reload(id))).unrevisedChanges).toBe(true);
  });

  it("reports a revision the engine cannot derive instead of failing", async () => {
    const { analyst } = kestrel.members;
    const broken = hookBlock(false);
    const document: DerivationDocument = {
      ...broken,
      cells: broken.cells.map((cell) => (cell.kind === "kinetic" ? { ...cell, expr: "1/2*m*l^2*theta'^2 + q" } : cell)),
    };
    const created = await createDerivation({ teamId: kestrel.team.id, title: "Half-typed model", ownerId: analyst.id, content: hookBlock(false) });
    await save(analyst, created.id, hookBlock(false));
    await post(reviewRoute, analyst, "review", created.id, { reviewerIds: [kestrel.members.reviewer.id] });
    await save(analyst, created.id, document);
    await post(reviewRoute, analyst, "review", created.id, { reviewerIds: [kestrel.members.reviewer.id] });
    const pair = (await revisionPair(await reload(created.id), {}))!;
    expect([pair.fromView.number, pair.toView.number]).toEqual([1, 2]);
    const documents = compareRevisionDocuments(pair.from, pair.to);
    if (!documents.ok) throw new Error(documents.message);
    const equations = await compareRevisionEquations(documents.before, documents.after, { from: 1, to: 2 });
    expect(equations.ok).toBe(false);
    expect(!equations.ok && equations.message).toMatch(/^Revision 2 does not derive: .*q/);
    const report = await revisionReport(await reload(created.id), pair.to.id);
    expect(report.evaluation.ok).toBe(false);
  });

  it("has nothing to compare with fewer than two revisions or an unknown number", async () => {
    const { analyst } = kestrel.members;
    const created = await createDerivation({ teamId: kestrel.team.id, title: "Lonely", ownerId: analyst.id, content: hookBlock(false) });
    expect(await revisionPair(created, {})).toBeNull();
    await save(analyst, created.id, hookBlock(false));
    await post(reviewRoute, analyst, "review", created.id, { reviewerIds: [kestrel.members.reviewer.id] });
    await save(analyst, created.id, hookBlock(true));
    await post(reviewRoute, analyst, "review", created.id, { reviewerIds: [kestrel.members.reviewer.id] });
    expect(await revisionPair(await reload(created.id), { from: 1, to: 7 })).toBeNull();
    expect(await revisionPair(await reload(created.id), { from: 2, to: 1 })).not.toBeNull();
  });
});
