// Comments in the audit log: starting a thread, replying, editing, deleting,
// resolving and reopening each record one event in the transaction of the change,
// shown by the team's audit route (and page) like every other event; a refused
// change records nothing.
import { afterAll, beforeAll, beforeEach, describe, expect, it, vi } from "vitest";

vi.mock("@/lib/auth/session", async () => (await import("./support/session")).sessionModule);

import * as commentRoute from "@/app/api/derivations/[id]/comments/[threadId]/[commentId]/route";
import * as threadRoute from "@/app/api/derivations/[id]/comments/[threadId]/route";
import * as threadsRoute from "@/app/api/derivations/[id]/comments/route";
import * as auditRoute from "@/app/api/teams/[teamId]/audit/route";
import { closeDatabase } from "@/db/client";
import { getAuditRowsByTeamId } from "@/db/queries/audit";
import { createDerivation } from "@/db/queries/derivations";
import type { SessionUser } from "@/lib/auth/session";
import type { AuditRowView } from "@/lib/audit";
import type { ThreadView } from "@/lib/comments/views";
import { toLatexTerms } from "@/lib/mechanics";
import { blankDocument } from "@/lib/notebook/document";
import { jsonRequest, makeTeam, params, resetDatabase, type TeamFixture } from "./support/fixtures";
import { signInAs, signOut } from "./support/session";

let kestrel: TeamFixture;
let derivationId: string;

// A term of a hoist rope's equation as the engine gives it (toLatexTerms).
const ropeTerm = toLatexTerms("m*x'' + k*x").terms[1]!;
const termAnchor = { kind: "term", cellId: "eqs", coordinate: "x", termId: ropeTerm.id, termText: ropeTerm.text, termLatex: ropeTerm.latex };

const base = () => `/api/derivations/${derivationId}/comments`;

async function call(user: SessionUser, run: () => Promise<Response>): Promise<{ status: number; thread: ThreadView }> {
  signInAs(user);
  const response = await run();
  return { status: response.status, thread: ((await response.json()) as { thread: ThreadView }).thread };
}

const start = (user: SessionUser, body: string) =>
  call(user, () => threadsRoute.POST(jsonRequest(base(), "POST", { anchor: termAnchor, body }), params({ id: derivationId })));
const reply = (user: SessionUser, threadId: string, body: string) =>
  call(user, () => threadRoute.POST(jsonRequest(`${base()}/${threadId}`, "POST", { body }), params({ id: derivationId, threadId })));
const setStatus = (user: SessionUser, threadId: string, status: "open" | "resolved") =>
  call(user, () => threadRoute.PATCH(jsonRequest(`${base()}/${threadId}`, "PATCH", { status }), params({ id: derivationId, threadId })));
const edit = (user: SessionUser, threadId: string, commentId: string, body: string) =>
  call(user, () => commentRoute.PATCH(jsonRequest(`${base()}/${threadId}/${commentId}`, "PATCH", { body }), params({ id: derivationId, threadId, commentId })));
const remove = (user: SessionUser, threadId: string, commentId: string) =>
  call(user, () => commentRoute.DELETE(jsonRequest(`${base()}/${threadId}/${commentId}`, "DELETE"), params({ id: derivationId, threadId, commentId })));

/** The team's comment events as a lead reads them through the audit route, oldest first. */
async function commentEvents(): Promise<AuditRowView[]> {
  signInAs(kestrel.members.lead);
  const response = await auditRoute.GET(jsonRequest(`/api/teams/${kestrel.team.id}/audit?action=comment.`, "GET"), params({ teamId: kestrel.team.id }));
  expect(response.status).toBe(200);
  return ((await response.json()) as { events: AuditRowView[] }).events.reverse();
}

beforeAll(async () => {
  await resetDatabase();
  kestrel = await makeTeam("Kestrel audit desk");
  const derivation = await createDerivation({
    teamId: kestrel.team.id,
    title: "Hoist rope stretch",
    ownerId: kestrel.members.analyst.id,
    content: blankDocument("Hoist rope stretch"),
  });
  derivationId = derivation.id;
});

beforeEach(() => signOut());

afterAll(async () => {
  await closeDatabase();
});

describe("comments in the audit log", () => {
  it("records create, reply, edit, delete, resolve and reopen with who, what and where", async () => {
    const { analyst, reviewer } = kestrel.members;
    const started = await start(reviewer, "Is the rope stiffness per metre or for the whole fall?");
    expect(started.status).toBe(201);
    const threadId = started.thread.id;
    const firstId = started.thread.comments[0]!.id;
    const replied = await reply(analyst, threadId, "For the whole fall at full payout.");
    expect(replied.status).toBe(201);
    const replyId = replied.thread.comments[1]!.id;
    expect((await edit(analyst, threadId, replyId, "For the whole fall at full payout (worst case).")).status).toBe(200);
    expect((await remove(reviewer, threadId, firstId)).status).toBe(200);
    expect((await setStatus(reviewer, threadId, "resolved")).status).toBe(200);
    expect((await setStatus(reviewer, threadId, "open")).status).toBe(200);

    const events = await commentEvents();
    expect(events.map((event) => [event.action, event.actorId, event.targetType, event.targetId])).toEqual([
      ["comment.create", reviewer.id, "comment", firstId],
      ["comment.create", analyst.id, "comment", replyId],
      ["comment.edit", analyst.id, "comment", replyId],
      ["comment.delete", reviewer.id, "comment", firstId],
      ["comment.resolve", reviewer.id, "comment_thread", threadId],
      ["comment.reopen", reviewer.id, "comment_thread", threadId],
    ]);
    // Every event names the derivation, and comment events their thread; none copies the text.
    expect(events.every((event) => event.details.derivationId === derivationId)).toBe(true);
    expect(events.filter((event) => event.targetType === "comment").every((event) => event.details.threadId === threadId)).toBe(true);
    expect(events[0]!.details).toMatchObject({ newThread: true, anchorKind: "term" });
    expect(events[1]!.details).toMatchObject({ newThread: false });
    expect(events[3]!.details).toMatchObject({ authorId: reviewer.id });
    expect(JSON.stringify(events.map((event) => event.details))).not.toMatch(/stiffness|payout/);
    expect(events.every((event) => event.actor === (event.actorId === reviewer.id ? reviewer.name : analyst.name))).toBe(true);
  });

  it("records nothing for a refused or repeated change", async () => {
    const { analyst, reviewer, viewer } = kestrel.members;
    const started = await start(analyst, "Check the sheave friction term.");
    const threadId = started.thread.id;
    const commentId = started.thread.comments[0]!.id;
    const before = (await commentEvents()).length;

    expect((await edit(reviewer, threadId, commentId, "Not mine to edit.")).status).toBe(403);
    expect((await reply(viewer, threadId, "Viewers read only.")).status).toBe(403);
    expect((await remove(analyst, threadId, commentId)).status).toBe(200);
    // Deleting it again finds nothing to delete.
    expect((await remove(analyst, threadId, commentId)).status).toBe(404);
    // Resolving twice changes the thread once.
    expect((await setStatus(analyst, threadId, "resolved")).status).toBe(200);
    expect((await setStatus(analyst, threadId, "resolved")).status).toBe(200);

    const after = (await commentEvents()).slice(before);
    expect(after.map((event) => [event.action, event.targetId])).toEqual([
      ["comment.delete", commentId],
      ["comment.resolve", threadId],
    ]);
  });

  it("lists comment actions in the audit filter and keeps them under the team", async () => {
    const rows = await getAuditRowsByTeamId({ teamId: kestrel.team.id, filters: { action: "comment.create" } });
    expect(rows.length).toBe(3);
    expect(rows.every((row) => row.teamId === kestrel.team.id)).toBe(true);
    const other = await makeTeam("Another firm's desk");
    expect(await getAuditRowsByTeamId({ teamId: other.team.id, filters: { action: "comment." } })).toEqual([]);
  });
});
