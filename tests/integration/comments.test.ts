import { afterAll, beforeAll, beforeEach, describe, expect, it, vi } from "vitest";
import * as Y from "yjs";

vi.mock("@/lib/auth/session", async () => (await import("./support/session")).sessionModule);

import * as settingsRoute from "@/app/api/account/notification-settings/route";
import * as commentRoute from "@/app/api/derivations/[id]/comments/[threadId]/[commentId]/route";
import * as threadRoute from "@/app/api/derivations/[id]/comments/[threadId]/route";
import * as threadsRoute from "@/app/api/derivations/[id]/comments/route";
import * as notificationsRoute from "@/app/api/notifications/route";
import { closeDatabase } from "@/db/client";
import { createDerivation } from "@/db/queries/derivations";
import type { SessionUser } from "@/lib/auth/session";
import { mentionToken } from "@/lib/comments/mentions";
import { createTextAnchor, resolveTextAnchor } from "@/lib/comments/text-anchor";
import type { TextAnchorView, ThreadView, ThreadsAnswer } from "@/lib/comments/views";
import { listCapturedMessages } from "@/lib/mailbox";
import { toLatexTerms } from "@/lib/mechanics";
import { blankDocument } from "@/lib/notebook/document";
import { jsonRequest, makeTeam, makeUser, params, resetDatabase, type TeamFixture } from "./support/fixtures";
import { signInAs, signOut } from "./support/session";

let kestrel: TeamFixture;
let derivationId: string;

// A term of the trolley-pendulum residual as the engine gives it (toLatexTerms).
const gravity = toLatexTerms("m*l^2*theta'' + m*g*l*sin(theta)").terms[1]!;
const termAnchor = { kind: "term", cellId: "eqs", coordinate: "theta", termId: gravity.id, termText: gravity.text, termLatex: gravity.latex };

// The Lagrangian field as a shared document holds it.
const fieldDoc = new Y.Doc();
const fieldText = fieldDoc.getText("expr");
fieldText.insert(0, "1/2*m*l^2*theta'^2 + m*g*l*cos(theta)");

function textAnchor() {
  const anchor = createTextAnchor(fieldText, 21, 5);
  return {
    kind: "text",
    cellId: "lagrangian",
    fieldPath: "expr",
    start: Buffer.from(anchor.start).toString("base64"),
    end: Buffer.from(anchor.end).toString("base64"),
    quote: anchor.quote,
  };
}

const base = () => `/api/derivations/${derivationId}/comments`;

async function listAs(user: SessionUser) {
  signInAs(user);
  const response = await threadsRoute.GET(jsonRequest(base(), "GET"), params({ id: derivationId }));
  return { status: response.status, body: (await response.json()) as ThreadsAnswer };
}

async function startAs(user: SessionUser, body: unknown) {
  signInAs(user);
  const response = await threadsRoute.POST(jsonRequest(base(), "POST", body), params({ id: derivationId }));
  return { status: response.status, body: (await response.json()) as { thread: ThreadView; error?: { code: string; fieldErrors?: Record<string, string[]> } } };
}

async function replyAs(user: SessionUser, threadId: string, body: string) {
  signInAs(user);
  const response = await threadRoute.POST(jsonRequest(`${base()}/${threadId}`, "POST", { body }), params({ id: derivationId, threadId }));
  return { status: response.status, body: (await response.json()) as { thread: ThreadView } };
}

async function setStatusAs(user: SessionUser, threadId: string, status: string) {
  signInAs(user);
  const response = await threadRoute.PATCH(jsonRequest(`${base()}/${threadId}`, "PATCH", { status }), params({ id: derivationId, threadId }));
  return { status: response.status, body: (await response.json()) as { thread: ThreadView } };
}

async function editAs(user: SessionUser, threadId: string, commentId: string, body: string) {
  signInAs(user);
  const response = await commentRoute.PATCH(
    jsonRequest(`${base()}/${threadId}/${commentId}`, "PATCH", { body }),
    params({ id: derivationId, threadId, commentId }),
  );
  return { status: response.status, body: (await response.json()) as { thread: ThreadView } };
}

async function deleteAs(user: SessionUser, threadId: string, commentId: string) {
  signInAs(user);
  const response = await commentRoute.DELETE(jsonRequest(`${base()}/${threadId}/${commentId}`, "DELETE"), params({ id: derivationId, threadId, commentId }));
  return { status: response.status, body: (await response.json()) as { thread: ThreadView } };
}

async function notificationsOf(user: SessionUser) {
  signInAs(user);
  const answer = (await (await notificationsRoute.GET(jsonRequest("/api/notifications", "GET"), params({}))).json()) as {
    notifications: { kind: string; text: string }[];
  };
  return answer.notifications.filter((notification) => notification.kind === "mention");
}

// The fake SMTP indexes a message shortly after accepting it; other suites share it,
// so count only the messages to this run's unique addresses.
async function mailsTo(address: string, { settle = 400 } = {}): Promise<number> {
  await new Promise((resolve) => setTimeout(resolve, settle));
  const messages = await listCapturedMessages();
  return messages.filter((message) => message.to.some((to) => to.address === address)).length;
}

beforeAll(async () => {
  await resetDatabase();
  kestrel = await makeTeam("Kestrel gimbal bench");
  const derivation = await createDerivation({
    teamId: kestrel.team.id,
    title: "Trolley pendulum",
    ownerId: kestrel.members.analyst.id,
    content: blankDocument("Trolley pendulum"),
  });
  derivationId = derivation.id;
});

beforeEach(() => signOut());

afterAll(async () => {
  await closeDatabase();
});

describe("comment threads", () => {
  it("lets a reviewer comment on a term and a viewer read it but not comment", async () => {
    const { reviewer, viewer } = kestrel.members;
    const started = await startAs(reviewer, { anchor: termAnchor, body: "Is the sign of the gravity term right for θ measured from the downward vertical?" });
    expect(started.status).toBe(201);
    expect(started.body.thread.anchor).toMatchObject({ kind: "term", key: `eqs/theta/${gravity.id}`, termText: "m*g*l*sin(theta)" });
    expect(started.body.thread.status).toBe("open");

    const read = await listAs(viewer);
    expect(read.status).toBe(200);
    expect(read.body.mayComment).toBe(false);
    const seen = read.body.threads.find((thread) => thread.id === started.body.thread.id)!;
    expect(seen.comments.map((comment) => comment.body)).toEqual([started.body.thread.comments[0]!.body]);
    expect(seen).toMatchObject({ mayReply: false, mayResolve: false });

    expect((await startAs(viewer, { anchor: termAnchor, body: "Looks fine." })).status).toBe(403);
    expect((await replyAs(viewer, started.body.thread.id, "Agreed.")).status).toBe(403);
    expect((await setStatusAs(viewer, started.body.thread.id, "resolved")).status).toBe(403);
  });

  it("anchors a thread to a span of text and refuses a malformed anchor", async () => {
    const { analyst } = kestrel.members;
    const started = await startAs(analyst, { anchor: textAnchor(), body: "Potential energy from the pivot height." });
    expect(started.status).toBe(201);
    expect(started.body.thread.anchor).toMatchObject({ kind: "text", cellId: "lagrangian", fieldPath: "expr", quote: "m*g*l" });
    // The stored bytes come back unchanged: after an edit before the span they still find it.
    const stored = started.body.thread.anchor as TextAnchorView;
    fieldText.insert(0, "T - V = ");
    const resolved = resolveTextAnchor(fieldDoc, fieldText, { start: Buffer.from(stored.start, "base64"), end: Buffer.from(stored.end, "base64") });
    expect(resolved).toMatchObject({ state: "attached", text: "m*g*l" });

    const bad = await startAs(analyst, { anchor: { ...textAnchor(), start: "not base64!" }, body: "x" });
    expect(bad.status).toBe(400);
    expect(bad.body.error?.fieldErrors?.["anchor.start"]).toBeDefined();
    const empty = await startAs(analyst, { anchor: termAnchor, body: "   " });
    expect(empty.status).toBe(400);
    expect(empty.body.error?.fieldErrors?.body).toEqual(["Write something first."]);
  });

  it("lets people edit and delete only their own comments", async () => {
    const { analyst, reviewer } = kestrel.members;
    const started = await startAs(reviewer, { anchor: termAnchor, body: "First thought." });
    const threadId = started.body.thread.id;
    const replied = await replyAs(analyst, threadId, "The coordinate is measured from the vertical.");
    expect(replied.status).toBe(201);
    const [first, reply] = replied.body.thread.comments;

    expect((await editAs(analyst, threadId, first!.id, "Changed by someone else.")).status).toBe(403);
    expect((await deleteAs(reviewer, threadId, reply!.id)).status).toBe(403);

    const edited = await editAs(reviewer, threadId, first!.id, "Second thought: fine.");
    expect(edited.status).toBe(200);
    expect(edited.body.thread.comments[0]).toMatchObject({ body: "Second thought: fine.", mayEdit: true });
    expect(edited.body.thread.comments[0]!.editedAt).not.toBeNull();

    const deleted = await deleteAs(analyst, threadId, reply!.id);
    expect(deleted.status).toBe(200);
    expect(deleted.body.thread.comments[1]).toMatchObject({ deleted: true, body: "", mayEdit: false, mayDelete: false });
    expect((await editAs(analyst, threadId, reply!.id, "Back again.")).status).toBe(404);
  });

  it("lets the thread's author, editors and leads resolve and reopen", async () => {
    const { analyst, reviewer, lead } = kestrel.members;
    const byAnalyst = (await startAs(analyst, { anchor: termAnchor, body: "Check the inertia term." })).body.thread;
    expect((await setStatusAs(reviewer, byAnalyst.id, "resolved")).status).toBe(403);
    const resolved = await setStatusAs(lead, byAnalyst.id, "resolved");
    expect(resolved.status).toBe(200);
    expect(resolved.body.thread).toMatchObject({ status: "resolved", resolvedByName: lead.name });
    expect((await setStatusAs(analyst, byAnalyst.id, "open")).body.thread).toMatchObject({ status: "open", resolvedAt: null });

    const byReviewer = (await startAs(reviewer, { anchor: termAnchor, body: "Mine to close." })).body.thread;
    expect(byReviewer.mayResolve).toBe(true);
    expect((await setStatusAs(reviewer, byReviewer.id, "resolved")).body.thread.status).toBe("resolved");
  });

  it("hides the threads of another team's derivation", async () => {
    const outsider = await makeUser("outsider");
    expect((await listAs(outsider)).status).toBe(404);
  });
});

describe("mentions", () => {
  it("sends one e-mail and one notification per mention, and an edit does not send again", async () => {
    const { analyst, lead, reviewer } = kestrel.members;
    const body = `${mentionToken({ name: lead.name, userId: lead.id })} can you confirm the damping sign?`;
    const started = await startAs(analyst, { anchor: termAnchor, body });
    expect(started.status).toBe(201);
    expect(await mailsTo(lead.email)).toBe(1);
    const leadNotes = await notificationsOf(lead);
    expect(leadNotes).toHaveLength(1);
    expect(leadNotes[0]!.text).toContain(`@${lead.name} can you confirm`);

    // Editing keeps the mention: no second e-mail, no second notification.
    const [comment] = started.body.thread.comments;
    const threadId = started.body.thread.id;
    expect((await editAs(analyst, threadId, comment!.id, `${body} (typo fixed)`)).status).toBe(200);
    // An edit that adds a person tells only that person.
    const added = `${body} ${mentionToken({ name: reviewer.name, userId: reviewer.id })} too.`;
    expect((await editAs(analyst, threadId, comment!.id, added)).status).toBe(200);
    expect(await mailsTo(lead.email)).toBe(1);
    expect(await notificationsOf(lead)).toHaveLength(1);
    expect(await mailsTo(reviewer.email)).toBe(1);
    expect(await notificationsOf(reviewer)).toHaveLength(1);
  });

  it("sends no e-mail to someone who turned mention e-mails off, but still notifies them in the app", async () => {
    const { analyst, viewer } = kestrel.members;
    signInAs(viewer);
    expect(await (await settingsRoute.GET(jsonRequest("/api/account/notification-settings", "GET"), params({}))).json()).toEqual({
      settings: { mentionEmails: true },
    });
    const off = await settingsRoute.PUT(jsonRequest("/api/account/notification-settings", "PUT", { mentionEmails: false }), params({}));
    expect(await off.json()).toEqual({ settings: { mentionEmails: false } });

    const started = await startAs(analyst, { anchor: termAnchor, body: `${mentionToken({ name: viewer.name, userId: viewer.id })} for your information.` });
    expect(started.status).toBe(201);
    expect(await mailsTo(viewer.email, { settle: 800 })).toBe(0);
    expect(await notificationsOf(viewer)).toHaveLength(1);
  });

  it("refuses a mention of someone outside the team and never notifies the author about themselves", async () => {
    const { analyst } = kestrel.members;
    const stranger = await makeUser("stranger");
    const refused = await startAs(analyst, { anchor: termAnchor, body: `${mentionToken({ name: stranger.name, userId: stranger.id })} look` });
    expect(refused.status).toBe(400);
    expect(refused.body.error?.fieldErrors?.body?.[0]).toMatch(/Only members of this team/);

    expect((await startAs(analyst, { anchor: termAnchor, body: `${mentionToken({ name: analyst.name, userId: analyst.id })} note to self` })).status).toBe(201);
    expect(await mailsTo(analyst.email)).toBe(0);
    expect(await notificationsOf(analyst)).toHaveLength(0);
  });
});
