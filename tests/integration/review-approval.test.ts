import { sql } from "drizzle-orm";
import { afterAll, beforeAll, beforeEach, describe, expect, it, vi } from "vitest";

vi.mock("@/lib/auth/session", async () => (await import("./support/session")).sessionModule);

import * as approveRoute from "@/app/api/derivations/[id]/approve/route";
import * as revisionRoute from "@/app/api/derivations/[id]/revisions/[revisionId]/route";
import * as restoreRoute from "@/app/api/derivations/[id]/revisions/[revisionId]/restore/route";
import * as revisionsRoute from "@/app/api/derivations/[id]/revisions/route";
import * as reviewDecisionRoute from "@/app/api/derivations/[id]/review/decision/route";
import * as reviewRoute from "@/app/api/derivations/[id]/review/route";
import * as derivationRoute from "@/app/api/derivations/[id]/route";
import * as unlockRoute from "@/app/api/derivations/[id]/unlock/route";
import * as notificationsRoute from "@/app/api/notifications/route";
import { closeDatabase, db } from "@/db/client";
import { getAuditRowsByTeamId } from "@/db/queries/audit";
import { createDerivation } from "@/db/queries/derivations";
import { upsertMembership } from "@/db/queries/teams";
import type { SessionUser } from "@/lib/auth/session";
import { contentHash } from "@/lib/history/content-hash";
import { listCapturedMessages } from "@/lib/mailbox";
import { blankDocument, type DerivationDocument } from "@/lib/notebook/document";
import { storeContentAs } from "./support/content";
import { jsonRequest, makeTeam, makeUser, params, resetDatabase, type TeamFixture } from "./support/fixtures";
import { signInAs, signOut } from "./support/session";

let kestrel: TeamFixture;
let secondLead: SessionUser;

function noteDocument(text: string): DerivationDocument {
  const doc = blankDocument("Hoist rope tension");
  return { ...doc, cells: [...doc.cells, { id: "note1", kind: "note", collapsed: false, markdown: text }] };
}

async function save(user: SessionUser, id: string, document: DerivationDocument) {
  return storeContentAs(user, id, document);
}

async function post<T extends { POST: (request: Request, context: { params: Promise<never> }) => Promise<Response> }>(
  route: T,
  user: SessionUser,
  url: string,
  routeParams: Record<string, string>,
  body?: unknown,
) {
  signInAs(user);
  return route.POST(jsonRequest(url, "POST", body), params(routeParams) as never);
}

async function revisionsOf(user: SessionUser, id: string) {
  signInAs(user);
  return (await revisionsRoute.GET(jsonRequest(`/api/derivations/${id}/revisions`, "GET"), params({ id }))).json();
}

async function newDerivation(title = "Hoist rope tension") {
  return createDerivation({ teamId: kestrel.team.id, title, ownerId: kestrel.members.analyst.id, content: blankDocument(title) });
}

beforeAll(async () => {
  await resetDatabase();
  kestrel = await makeTeam("Kestrel review bay");
  secondLead = await makeUser("second-lead");
  await upsertMembership({ teamId: kestrel.team.id, userId: secondLead.id, role: "lead" });
  await fetch(`${process.env.MAILBOX_API_URL ?? "http://127.0.0.1:1081"}/api/email/all`, { method: "DELETE" });
});

beforeEach(() => signOut());

afterAll(async () => {
  await closeDatabase();
});

describe("review, approval and lock", () => {
  it("walks a derivation from draft through review to approval, then unlocks it with a reason", async () => {
    const { analyst, reviewer, lead } = kestrel.members;
    const derivation = await newDerivation();
    const id = derivation.id;
    expect((await save(analyst, id, noteDocument("Rope modelled as a rigid link."))).status).toBe("saved");

    // Only reviewers and leads can be asked.
    const wrong = await post(reviewRoute, analyst, `/api/derivations/${id}/review`, { id }, { reviewerIds: [kestrel.members.viewer.id] });
    expect(wrong.status).toBe(400);
    expect((await wrong.json()).error.fieldErrors.reviewerIds[0]).toMatch(/viewer/);
    expect((await post(reviewRoute, kestrel.members.viewer, `/api/derivations/${id}/review`, { id }, { reviewerIds: [reviewer.id] })).status).toBe(403);

    const asked = await post(
      reviewRoute,
      analyst,
      `/api/derivations/${id}/review`,
      { id },
      { reviewerIds: [reviewer.id], message: "Please check the rope term." },
    );
    expect(asked.status).toBe(201);
    const first = (await asked.json()).revision;
    expect(first.number).toBe(1);
    // One e-mail to the reviewer, one notification.
    const mails = (await listCapturedMessages()).filter((m) => m.subject === "Review requested: Hoist rope tension");
    expect(mails.map((m) => m.to[0]?.address)).toEqual([reviewer.email]);
    signInAs(reviewer);
    const inbox = await (await notificationsRoute.GET(jsonRequest("/api/notifications", "GET"), params({}))).json();
    expect(inbox.unread).toBe(1);
    expect(inbox.notifications[0]).toMatchObject({ kind: "review_request", derivationId: id, actorId: analyst.id });

    // Changes requested: back to draft.
    const noComment = await post(reviewDecisionRoute, reviewer, `/api/derivations/${id}/review/decision`, { id }, { decision: "changes_requested" });
    expect(noComment.status).toBe(400);
    const changes = await post(
      reviewDecisionRoute,
      reviewer,
      `/api/derivations/${id}/review/decision`,
      { id },
      { decision: "changes_requested", comment: "Add the rope's own mass." },
    );
    expect(changes.status).toBe(200);
    signInAs(analyst);
    expect((await (await derivationRoute.GET(jsonRequest(`/api/derivations/${id}`, "GET"), params({ id }))).json()).derivation.status).toBe("draft");

    // The analyst fixes and asks again; the reviewer signs off.
    await save(analyst, id, noteDocument("Rope modelled as a rigid link with its own mass."));
    const again = await (await post(reviewRoute, analyst, `/api/derivations/${id}/review`, { id }, { reviewerIds: [reviewer.id, lead.id] })).json();
    expect(again.revision.number).toBe(2);
    expect((await post(reviewDecisionRoute, reviewer, `/api/derivations/${id}/review/decision`, { id }, { decision: "signed_off" })).status).toBe(200);

    // Only the latest revision can be approved, only by a lead.
    expect((await post(approveRoute, reviewer, `/api/derivations/${id}/approve`, { id }, { revisionId: again.revision.id })).status).toBe(403);
    const stale = await post(approveRoute, lead, `/api/derivations/${id}/approve`, { id }, { revisionId: first.id });
    expect(stale.status).toBe(409);
    expect((await stale.json()).error.message).toMatch(/latest is revision 2/);
    const approved = await post(approveRoute, lead, `/api/derivations/${id}/approve`, { id }, { revisionId: again.revision.id });
    expect(approved.status).toBe(200);
    const approval = await approved.json();
    expect(approval).toMatchObject({
      status: "approved",
      revision: { number: 2 },
      approval: { approvedById: lead.id, contentHash: again.revision.contentHash },
    });

    // Locked: the stored content takes no edit (a lead's neither), and every write route is refused with 423.
    expect((await save(analyst, id, noteDocument("sneaky edit"))).status).toBe("locked");
    expect((await save(lead, id, noteDocument("even a lead"))).status).toBe("locked");
    signInAs(lead);
    expect((await derivationRoute.PATCH(jsonRequest(`/api/derivations/${id}`, "PATCH", { title: "Renamed" }), params({ id }))).status).toBe(423);
    expect((await derivationRoute.DELETE(jsonRequest(`/api/derivations/${id}`, "DELETE"), params({ id }))).status).toBe(423);
    expect((await post(revisionsRoute, lead, `/api/derivations/${id}/revisions`, { id }, { name: "after approval" })).status).toBe(423);

    // Unlock needs a lead and a reason; the approval stays in history.
    expect((await post(unlockRoute, analyst, `/api/derivations/${id}/unlock`, { id }, { reason: "I would like to edit it again." })).status).toBe(403);
    expect((await post(unlockRoute, lead, `/api/derivations/${id}/unlock`, { id }, { reason: "short" })).status).toBe(400);
    const unlocked = await post(unlockRoute, lead, `/api/derivations/${id}/unlock`, { id }, { reason: "Rope stiffness needed for the dynamic load case." });
    expect(unlocked.status).toBe(200);
    expect((await unlocked.json()).status).toBe("draft");
    signInAs(analyst);
    const state = await (await reviewRoute.GET(jsonRequest(`/api/derivations/${id}/review`, "GET"), params({ id }))).json();
    expect(state.approvals[0]).toMatchObject({
      revisionId: again.revision.id,
      unlockReason: "Rope stiffness needed for the dynamic load case.",
      unlockedById: lead.id,
    });

    // The approved revision stays retrievable after later edits.
    await save(analyst, id, noteDocument("Rope with stiffness."));
    const kept = await (
      await revisionRoute.GET(jsonRequest(`/api/derivations/${id}/revisions/${again.revision.id}`, "GET"), params({ id, revisionId: again.revision.id }))
    ).json();
    expect(contentHash(kept.revision.content)).toBe(again.revision.contentHash);
    expect(kept.revision.content.cells.at(-1).markdown).toBe("Rope modelled as a rigid link with its own mass.");

    const actions = (await getAuditRowsByTeamId({ teamId: kestrel.team.id, filters: { action: "derivation." } }))
      .filter((row) => row.targetId === id)
      .map((row) => row.action);
    for (const action of ["derivation.review_request", "derivation.changes_requested", "derivation.sign_off", "derivation.approve", "derivation.unlock"])
      expect(actions).toContain(action);
  });

  it("refuses approval by the author of the latest changes", async () => {
    const derivation = await newDerivation("Gimbal yaw axis");
    const id = derivation.id;
    const { lead, reviewer } = kestrel.members;
    await save(lead, id, noteDocument("Lead's own change."));
    const asked = await (await post(reviewRoute, lead, `/api/derivations/${id}/review`, { id }, { reviewerIds: [reviewer.id] })).json();
    const own = await post(approveRoute, lead, `/api/derivations/${id}/approve`, { id }, { revisionId: asked.revision.id });
    expect(own.status).toBe(403);
    expect((await own.json()).error.message).toMatch(/second person/);
    expect((await post(approveRoute, secondLead, `/api/derivations/${id}/approve`, { id }, { revisionId: asked.revision.id })).status).toBe(200);
  });

  it("refuses approving content that changed after the revision", async () => {
    const derivation = await newDerivation("Seat rig damper");
    const id = derivation.id;
    const { analyst, reviewer, lead } = kestrel.members;
    await save(analyst, id, noteDocument("v1"));
    const asked = await (await post(reviewRoute, analyst, `/api/derivations/${id}/review`, { id }, { reviewerIds: [reviewer.id] })).json();
    await save(analyst, id, noteDocument("v2 after the request"));
    const refused = await post(approveRoute, lead, `/api/derivations/${id}/approve`, { id }, { revisionId: asked.revision.id });
    expect(refused.status).toBe(409);
    expect((await refused.json()).error.message).toMatch(/changed after revision 1/);
  });

  it("resolves an approval racing an edit in one transaction: exactly one wins", async () => {
    const { analyst, reviewer, lead } = kestrel.members;
    for (let round = 0; round < 6; round += 1) {
      const derivation = await newDerivation(`Race ${round}`);
      const id = derivation.id;
      await save(analyst, id, noteDocument(`round ${round}`));
      const asked = await (await post(reviewRoute, analyst, `/api/derivations/${id}/review`, { id }, { reviewerIds: [reviewer.id] })).json();
      // Both requests run with their own session: bypass the single test session by calling the queries' routes in sequence of awaits.
      signInAs(lead);
      const approval = approveRoute.POST(jsonRequest(`/api/derivations/${id}/approve`, "POST", { revisionId: asked.revision.id }), params({ id }));
      // The analyst's edit reaching the stored row, as the collaboration server writes it.
      const edit = storeContentAs(analyst, id, noteDocument(`edit during approval ${round}`));
      const [approvalResponse, editResult] = await Promise.all([approval, edit]);
      const row = await db.execute(sql`select status, locked_at is not null as locked from derivations where id = ${id}`);
      if (approvalResponse.status === 200) {
        expect(editResult.status).toBe("locked");
        expect(row.rows[0]).toMatchObject({ status: "approved", locked: true });
      } else {
        expect(approvalResponse.status).toBe(409);
        expect(editResult.status).toBe("saved");
        expect(row.rows[0]).toMatchObject({ locked: false });
      }
    }
  });

  it("keeps history: checkpoints, restore as a new revision, nothing rewritten", async () => {
    const derivation = await newDerivation("Trolley brake");
    const id = derivation.id;
    const { analyst, viewer } = kestrel.members;
    await save(analyst, id, noteDocument("first"));
    const checkpoint = await post(revisionsRoute, analyst, `/api/derivations/${id}/revisions`, { id }, { name: "Before friction" });
    expect(checkpoint.status).toBe(201);
    const named = (await checkpoint.json()).revision;
    // The first save became revision 1; the checkpoint names the same content, with no changes since.
    expect(named).toMatchObject({ number: 2, kind: "checkpoint", name: "Before friction", authorIds: [] });
    await save(analyst, id, noteDocument("second, with friction"));
    let list = await revisionsOf(viewer, id);
    expect(list.current.inHistory).toBe(false);
    expect((await post(restoreRoute, viewer, `/api/derivations/${id}/revisions/${named.id}/restore`, { id, revisionId: named.id })).status).toBe(403);
    const restored = await post(restoreRoute, analyst, `/api/derivations/${id}/revisions/${named.id}/restore`, { id, revisionId: named.id });
    expect(restored.status).toBe(200);
    list = await revisionsOf(viewer, id);
    // The state before the restore is kept (3), then the restored content is a new revision (4).
    expect(list.revisions.map((r: { number: number; kind: string }) => `${r.number}:${r.kind}`)).toEqual(["4:restore", "3:auto", "2:checkpoint", "1:auto"]);
    expect(list.revisions[1].authorIds).toEqual([analyst.id]);
    expect(list.revisions[0].contentHash).toBe(named.contentHash);
    expect(list.current.inHistory).toBe(true);
  });
});
