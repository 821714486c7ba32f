// The permission sweep: every route handler (each exported HTTP method of each
// app/**/route.ts) and every server action ("use server" modules) is called as
// each role of a team, as a member of another team and as a stranger without
// a session, and the answer must match the table below. The routes and actions
// are found on disk, so a new one without a row fails this test: add its row
// (the expected outcome per caller) when you add the route.
import { randomUUID } from "node:crypto";
import { readdirSync, readFileSync, statSync } from "node:fs";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";

vi.mock("@/lib/auth/session", async () => (await import("./support/session")).sessionModule);

import { closeDatabase } from "@/db/client";
import { createApiToken } from "@/db/queries/api-tokens";
import { createDerivation, trashDerivationById } from "@/db/queries/derivations";
import { createFile } from "@/db/queries/files";
import { createInvite } from "@/db/queries/invites";
import { createJob } from "@/db/queries/jobs";
import { createCommentThread } from "@/db/queries/comments";
import { createCheckpoint } from "@/db/queries/revisions";
import { createSimulationRun } from "@/db/queries/runs";
import { createStudyWithRuns } from "@/db/queries/studies";
import { createTeamWithLead, upsertMembership } from "@/db/queries/teams";
import { createToken } from "@/lib/auth/tokens";
import type { SessionUser } from "@/lib/auth/session";
import { DEFAULT_STUDY_SETTINGS, blankDocument } from "@/lib/notebook/document";
import type { StudySpec } from "@/lib/study";
import { deleteObject, putObject } from "@/lib/storage";
import { closeJobQueue } from "@/lib/jobs/boss";
import { closeEnginePool } from "@/lib/workers/engine-pool";
import { signInAs, signOut } from "./support/session";
import { makeTeam, makeUser, resetDatabase, uniqueEmail } from "./support/fixtures";

const root = path.resolve(import.meta.dirname, "../..");
const HTTP_METHODS = ["GET", "HEAD", "POST", "PUT", "PATCH", "DELETE", "OPTIONS"] as const;
type HttpMethod = (typeof HTTP_METHODS)[number];

// ---------------------------------------------------------------------------
// Who calls. "outsider" is the lead of another team; "stranger" has no session.
const callers = ["lead", "analyst", "reviewer", "viewer", "outsider", "stranger"] as const;
type Caller = (typeof callers)[number];

/** "allowed": the permission gate let the call through (any answer but 401, 403, 404 or a 5xx). A number: exactly that status. */
type Outcome = "allowed" | 401 | 403 | 404;
type Expectation = Record<Caller, Outcome>;

const ok = "allowed" as const;
/** A route of the team's own resources: members by role, another team's lead sees nothing (404), a stranger must sign in (401). */
const roles = (lead: Outcome, analyst: Outcome, reviewer: Outcome, viewer: Outcome): Expectation => ({
  lead,
  analyst,
  reviewer,
  viewer,
  outsider: 404,
  stranger: 401,
});
const anyMember = roles(ok, ok, ok, ok);
const leadOnly = roles(ok, 403, 403, 403);
/** Any signed-in person (their own things: teams, notifications). */
const signedIn: Expectation = { lead: ok, analyst: ok, reviewer: ok, viewer: ok, outsider: ok, stranger: 401 };
/** Open to everyone, with or without a session (sign-up, health, the API description). */
const everyone: Expectation = { lead: ok, analyst: ok, reviewer: ok, viewer: ok, outsider: ok, stranger: ok };
/** The public API answers team tokens only: a session, however privileged, opens nothing. */
const tokenOnly: Expectation = { lead: 401, analyst: 401, reviewer: 401, viewer: 401, outsider: 401, stranger: 401 };

interface RouteRow {
  expect: Expectation;
  /** The JSON body sent with POST, PUT and PATCH (default `{}`): enough to reach the permission check, not to succeed. */
  body?: unknown;
  /** Why the row is what it is, where that is not plain from the route. */
  note?: string;
  /** Handlers this sweep does not call, with the reason; the route must still be listed. */
  notCalled?: string;
}

// The table: one row per "METHOD /path/[param]". The expectations are the
// product's rules written out (lib/auth/permissions.ts decides them; this
// table says what each route must answer). The derivation is a draft owned by
// the analyst; the trashed one too.
const routeTable: Record<string, RouteRow> = {
  "GET /api/auth/[...nextauth]": { expect: everyone, notCalled: "next-auth's own handler (sign-in with its double-submit CSRF token, session, sign-out)" },
  "POST /api/auth/[...nextauth]": { expect: everyone, notCalled: "next-auth's own handler (sign-in with its double-submit CSRF token, session, sign-out)" },
  "POST /api/auth/forgot-password": { expect: everyone },
  "POST /api/auth/reset-password": { expect: everyone },
  "POST /api/auth/sign-up": { expect: everyone },
  "GET /api/health": { expect: everyone },

  "GET /api/teams": { expect: signedIn },
  "POST /api/teams": { expect: signedIn },
  "GET /api/notifications": { expect: signedIn },
  "POST /api/notifications/read": { expect: signedIn },
  "POST /api/invites/[token]/accept": {
    expect: { lead: 404, analyst: 404, reviewer: 404, viewer: 404, outsider: 404, stranger: 401 },
    note: "any signed-in person may accept an invitation they hold; an unknown token is a 404 for all",
  },

  "GET /api/teams/[teamId]/members": { expect: anyMember },
  "PATCH /api/teams/[teamId]/members/[userId]": { expect: leadOnly, body: { role: "analyst" } },
  "DELETE /api/teams/[teamId]/members/[userId]": { expect: leadOnly },
  "GET /api/teams/[teamId]/invites": { expect: leadOnly },
  "POST /api/teams/[teamId]/invites": { expect: leadOnly },
  "DELETE /api/teams/[teamId]/invites/[inviteId]": { expect: leadOnly },
  "POST /api/teams/[teamId]/invites/[inviteId]/resend": { expect: leadOnly },
  "GET /api/teams/[teamId]/audit": { expect: leadOnly },
  "GET /api/teams/[teamId]/tokens": { expect: leadOnly },
  "POST /api/teams/[teamId]/tokens": { expect: leadOnly },
  "DELETE /api/teams/[teamId]/tokens/[tokenId]": { expect: leadOnly },
  "GET /api/teams/[teamId]/derivations": { expect: anyMember },
  "POST /api/teams/[teamId]/derivations": { expect: roles(ok, ok, 403, 403) },
  "POST /api/teams/[teamId]/derivations/import": { expect: roles(ok, ok, 403, 403) },
  "POST /api/teams/[teamId]/derivations/import/notebook": { expect: roles(ok, ok, 403, 403) },
  "GET /api/teams/[teamId]/trash": { expect: roles(ok, ok, 403, 403) },
  "POST /api/teams/[teamId]/trash/[derivationId]/restore": { expect: roles(ok, ok, 403, 403), note: "the analyst owns the trashed derivation" },
  "DELETE /api/teams/[teamId]/trash/[derivationId]": { expect: leadOnly },

  "GET /api/derivations/[id]": { expect: anyMember },
  "PATCH /api/derivations/[id]": { expect: roles(ok, ok, 403, 403), body: { title: "Renamed by the sweep" } },
  "DELETE /api/derivations/[id]": { expect: roles(ok, ok, 403, 403), note: "the analyst owns it" },
  "POST /api/derivations/[id]/evaluate": { expect: anyMember },
  "POST /api/derivations/[id]/linearize": { expect: anyMember },
  "GET /api/derivations/[id]/code": { expect: anyMember },
  "POST /api/derivations/[id]/code": { expect: anyMember },
  "GET /api/derivations/[id]/export": { expect: anyMember },
  "GET /api/derivations/[id]/export/notebook": { expect: anyMember },
  "GET /api/derivations/[id]/recovered-model": { expect: anyMember },
  "GET /api/derivations/[id]/view-preferences": { expect: anyMember },
  "PUT /api/derivations/[id]/view-preferences": { expect: anyMember, note: "a reader's own view choices" },
  "GET /api/derivations/[id]/files": { expect: anyMember },
  "POST /api/derivations/[id]/files": { expect: roles(ok, ok, 403, 403) },
  "GET /api/files/[fileId]": { expect: anyMember },
  "DELETE /api/files/[fileId]": { expect: roles(ok, ok, 403, 403) },
  "GET /api/derivations/[id]/runs": { expect: anyMember },
  "POST /api/derivations/[id]/runs": { expect: roles(ok, ok, ok, 403), note: "reviewers check a derivation by running it" },
  "GET /api/derivations/[id]/runs/[runId]": { expect: anyMember },
  "GET /api/derivations/[id]/runs/[runId]/csv": { expect: anyMember },
  "POST /api/derivations/[id]/fit": { expect: roles(ok, ok, ok, 403) },
  "POST /api/derivations/[id]/fit/apply": { expect: roles(ok, ok, 403, 403) },
  "GET /api/derivations/[id]/jobs/[jobId]": { expect: anyMember },
  "POST /api/derivations/[id]/jobs/[jobId]/cancel": {
    expect: roles(ok, ok, ok, 403),
    note: "whoever may simulate may cancel a queued run or fit (the sweep's job is a run); an evaluation or report only by who queued it (job-queue tests)",
  },
  "GET /api/derivations/[id]/jobs/[jobId]/download": { expect: anyMember, note: "the sweep's job is a run: 409, no file, past the gate" },
  "GET /api/derivations/[id]/studies": { expect: anyMember },
  "POST /api/derivations/[id]/studies": { expect: roles(ok, ok, ok, 403), note: "running a study is running simulations" },
  "GET /api/derivations/[id]/studies/[studyId]": { expect: anyMember },
  "POST /api/derivations/[id]/studies/[studyId]/cancel": { expect: roles(ok, ok, ok, 403), note: "whoever may simulate may cancel a study" },
  "GET /api/derivations/[id]/studies/[studyId]/csv": { expect: anyMember },
  "POST /api/derivations/[id]/studies/[studyId]/runs/[index]/open": { expect: roles(ok, ok, ok, 403), note: "opening a run queues a server simulation" },
  "POST /api/derivations/[id]/collab-token": { expect: anyMember, note: "readers get a read-only token" },
  "GET /api/derivations/[id]/comments": { expect: anyMember },
  "POST /api/derivations/[id]/comments": { expect: roles(ok, ok, ok, 403), note: "reviewers comment; that is their job" },
  "POST /api/derivations/[id]/comments/[threadId]": { expect: roles(ok, ok, ok, 403), body: { body: "A reply from the sweep" } },
  "PATCH /api/derivations/[id]/comments/[threadId]": {
    expect: roles(ok, ok, 403, 403),
    body: { status: "resolved" },
    note: "the analyst wrote the thread; leads and analysts resolve any, a reviewer only their own",
  },
  "PATCH /api/derivations/[id]/comments/[threadId]/[commentId]": {
    expect: roles(403, ok, 403, 403),
    body: { body: "Edited by the sweep" },
    note: "only the comment's author (the analyst) edits it",
  },
  "DELETE /api/derivations/[id]/comments/[threadId]/[commentId]": {
    expect: roles(403, ok, 403, 403),
    note: "only the comment's author (the analyst) deletes it",
  },
  "GET /api/account/notification-settings": { expect: signedIn },
  "PUT /api/account/notification-settings": { expect: signedIn, body: { mentionEmails: false } },
  "GET /api/derivations/[id]/revisions": { expect: anyMember },
  "POST /api/derivations/[id]/revisions": { expect: roles(ok, ok, 403, 403) },
  "GET /api/derivations/[id]/revisions/[revisionId]": { expect: anyMember },
  "POST /api/derivations/[id]/revisions/[revisionId]/restore": { expect: roles(ok, ok, 403, 403) },
  "POST /api/derivations/[id]/revisions/[revisionId]/report": { expect: anyMember, note: "queues a report file; every reader may print" },
  "GET /api/derivations/[id]/review": { expect: anyMember },
  "POST /api/derivations/[id]/review": { expect: roles(ok, ok, 403, 403) },
  "POST /api/derivations/[id]/review/decision": { expect: roles(ok, 403, ok, 403) },
  "POST /api/derivations/[id]/approve": { expect: leadOnly },
  "POST /api/derivations/[id]/unlock": { expect: leadOnly },

  "GET /api/v1/derivations": { expect: tokenOnly },
  "GET /api/v1/derivations/[id]/approved": { expect: tokenOnly },
  "GET /api/v1/openapi.json": { expect: everyone },
};

interface ActionRow {
  expect: Expectation;
  /** Calls the action with arguments that reach its permission check. */
  call: (action: (...args: never[]) => Promise<unknown>, world: World) => Promise<unknown>;
}

// Server actions, keyed "<file>#<export>". None exist yet: route handlers do
// the work. Next.js itself refuses an action whose Origin does not match the
// host; the permission rules are the action's own and are swept here.
const actionTable: Record<string, ActionRow> = {};

// ---------------------------------------------------------------------------
// Discovery.
function walk(dir: string, visit: (file: string) => void): void {
  for (const name of readdirSync(dir)) {
    if (name === "node_modules" || name.startsWith(".")) continue;
    const full = path.join(dir, name);
    if (statSync(full).isDirectory()) walk(full, visit);
    else visit(full);
  }
}

function routeFiles(): string[] {
  const files: string[] = [];
  walk(path.join(root, "app"), (file) => {
    if (/\/route\.(ts|tsx|js|mjs)$/.test(file)) files.push(file);
  });
  return files.sort();
}

/** "app/api/derivations/[id]/route.ts" → "/api/derivations/[id]" (route groups dropped). */
function routeTemplate(file: string): string {
  const relative = path.relative(path.join(root, "app"), path.dirname(file)).split(path.sep);
  return `/${relative.filter((segment) => !/^\(.*\)$/.test(segment)).join("/")}`;
}

/** Files whose first statement is the "use server" directive, with their exported functions. */
async function serverActionExports(): Promise<string[]> {
  const keys: string[] = [];
  for (const dir of ["app", "components", "lib"]) {
    const files: string[] = [];
    walk(path.join(root, dir), (file) => {
      if (/\.(ts|tsx)$/.test(file)) files.push(file);
    });
    for (const file of files) {
      const head = readFileSync(file, "utf8")
        .replace(/^(\s|\/\/[^\n]*\n|\/\*[\s\S]*?\*\/)*/, "")
        .slice(0, 20);
      if (!/^["']use server["']/.test(head)) continue;
      const exported = (await import(file)) as Record<string, unknown>;
      for (const [name, value] of Object.entries(exported)) {
        if (typeof value === "function") keys.push(`${path.relative(root, file)}#${name}`);
      }
    }
  }
  return keys.sort();
}

interface DiscoveredRoute {
  key: string;
  template: string;
  method: HttpMethod;
  handler: (request: Request, context: { params: Promise<Record<string, string | string[]>> }) => Promise<Response>;
}

async function discoverRoutes(): Promise<DiscoveredRoute[]> {
  const found: DiscoveredRoute[] = [];
  for (const file of routeFiles()) {
    const exported = (await import(file)) as Record<string, unknown>;
    const template = routeTemplate(file);
    for (const method of HTTP_METHODS) {
      const handler = exported[method];
      if (typeof handler === "function") found.push({ key: `${method} ${template}`, template, method, handler: handler as DiscoveredRoute["handler"] });
    }
  }
  return found;
}

// ---------------------------------------------------------------------------
// The world each call runs in: one team with a member of every role, another
// team (its lead is the outsider), and one of each resource the routes name.
interface World {
  users: Record<Exclude<Caller, "stranger">, SessionUser>;
  params: Record<string, string>;
}

const PNG_BYTES = new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 0]);
// Every object a world stores, removed again after the sweep: the object store is shared and
// outlives the database reset.
const storedKeys: string[] = [];

async function buildWorld(): Promise<World> {
  const { team, members } = await makeTeam("Sweep bench");
  const target = await makeUser("target");
  await upsertMembership({ teamId: team.id, userId: target.id, role: "viewer" });
  const outsider = await makeUser("outsider");
  await createTeamWithLead({ name: "Another firm", leadUserId: outsider.id });

  const derivation = await createDerivation({ teamId: team.id, title: "Sweep hoist", ownerId: members.analyst.id, content: blankDocument("Sweep hoist") });
  const checkpoint = await createCheckpoint({ derivationId: derivation.id, name: "Sweep checkpoint", actorId: members.analyst.id });
  if (!checkpoint.ok) throw new Error("fixture checkpoint refused");
  const runId = randomUUID();
  await createSimulationRun({
    run: {
      id: runId,
      derivationId: derivation.id,
      settings: {},
      status: "completed",
      timeReached: 1,
      trajectory: { coordinateNames: ["x"], times: [0, 1], coordinates: [[0, 1]], rates: [[0, 0]], energy: null },
      pointCount: 2,
      modelHash: "0".repeat(64),
      createdById: members.analyst.id,
    },
  });
  const jobId = randomUUID();
  await createJob({
    job: {
      id: jobId,
      derivationId: derivation.id,
      kind: "simulation",
      state: "completed",
      progress: 1,
      input: {},
      result: {},
      createdById: members.analyst.id,
      finishedAt: new Date(),
    },
  });
  const studyId = randomUUID();
  const studySpec: StudySpec = {
    mode: "grid",
    samples: 1,
    seed: 0,
    parameters: [],
    cases: [{ name: "nominal", initialCoordinates: {}, initialRates: {}, inputs: {} }],
    startTime: 0,
    endTime: 1,
    outputStep: 0.5,
    tolerance: 1e-8,
    watch: [],
    runCount: 1,
  };
  await createStudyWithRuns({
    study: {
      id: studyId,
      derivationId: derivation.id,
      cellId: "sweep-study",
      state: "completed",
      mode: "grid",
      settings: DEFAULT_STUDY_SETTINGS,
      spec: studySpec,
      content: derivation.content,
      modelHash: "0".repeat(64),
      total: 1,
      createdById: members.analyst.id,
    },
    runs: [{ runIndex: 0, caseIndex: 0, caseName: "nominal", parameters: {} }],
  });
  const { thread, comment } = await createCommentThread({
    thread: {
      derivationId: derivation.id,
      authorId: members.analyst.id,
      anchorKind: "term",
      termKey: "sweep:x:term",
      termText: "m*x''",
      termLatex: "m\\ddot{x}",
    },
    body: "A thread of the sweep",
    mentions: {
      mentionedUserIds: [],
      notificationFor: () => {
        throw new Error("no mentions in the sweep");
      },
    },
    audit: { teamId: team.id, derivationId: derivation.id, actorId: members.analyst.id },
  });
  const fileId = randomUUID();
  const objectKey = `derivations/${derivation.id}/files/${fileId}`;
  await putObject({ key: objectKey, body: PNG_BYTES, contentType: "image/png" });
  storedKeys.push(objectKey);
  await createFile({
    teamId: team.id,
    file: {
      id: fileId,
      derivationId: derivation.id,
      kind: "image",
      objectKey,
      originalName: "sketch.png",
      contentType: "image/png",
      sizeBytes: PNG_BYTES.byteLength,
      uploadedById: members.analyst.id,
      summary: null,
    },
  });
  const invite = await createInvite({
    teamId: team.id,
    email: uniqueEmail("invitee"),
    role: "viewer",
    tokenHash: createToken().tokenHash,
    invitedById: members.lead.id,
    expiresAt: new Date(Date.now() + 3_600_000),
  });
  const apiToken = createToken();
  const token = await createApiToken({
    teamId: team.id,
    name: "Sweep build",
    tokenHash: apiToken.tokenHash,
    prefix: apiToken.token.slice(0, 8),
    createdById: members.lead.id,
    expiresAt: null,
  });
  const trashed = await createDerivation({ teamId: team.id, title: "Sweep trash", ownerId: members.analyst.id, content: blankDocument("Sweep trash") });
  await trashDerivationById({ id: trashed.id, actorId: members.analyst.id });

  return {
    users: { ...members, outsider },
    params: {
      teamId: team.id,
      id: derivation.id,
      revisionId: checkpoint.revision.id,
      runId,
      jobId,
      studyId,
      index: "0",
      threadId: thread.id,
      commentId: comment.id,
      fileId,
      inviteId: invite.id,
      tokenId: token.id,
      userId: target.id,
      derivationId: trashed.id,
      // An invitation token nobody holds.
      token: createToken().token,
    },
  };
}

function fillTemplate(template: string, params: Record<string, string>): { url: string; routeParams: Record<string, string | string[]> } {
  const routeParams: Record<string, string | string[]> = {};
  const url = template.replace(/\[(\.\.\.)?([^\]]+)\]/g, (_, rest: string | undefined, name: string) => {
    const value = params[name] ?? "session";
    routeParams[name] = rest ? [value] : value;
    return value;
  });
  return { url, routeParams };
}

async function call(route: DiscoveredRoute, row: RouteRow, caller: Caller, world: World): Promise<Response> {
  if (caller === "stranger") signOut();
  else signInAs(world.users[caller]);
  const { url, routeParams } = fillTemplate(route.template, world.params);
  const hasBody = route.method === "POST" || route.method === "PUT" || route.method === "PATCH";
  const text = hasBody ? JSON.stringify(row.body ?? {}) : undefined;
  const headers: Record<string, string> = { origin: "http://localhost" };
  if (text !== undefined) Object.assign(headers, { "content-type": "application/json", "content-length": String(Buffer.byteLength(text)) });
  const request = new Request(`http://localhost${url}`, { method: route.method, headers, body: text });
  return route.handler(request, { params: Promise.resolve(routeParams) });
}

function matches(outcome: Outcome, status: number): boolean {
  if (outcome === "allowed") return status < 500 && status !== 401 && status !== 403 && status !== 404;
  return status === outcome;
}

// ---------------------------------------------------------------------------
let routes: DiscoveredRoute[] = [];

beforeAll(async () => {
  await resetDatabase();
  routes = await discoverRoutes();
}, 120_000);
// Every world stores an object (hundreds of deletes) and the queue stops gracefully: more than the 10 s default on a busy machine.
afterAll(async () => {
  for (const key of storedKeys) await deleteObject({ key }).catch(() => undefined);
  await closeJobQueue();
  await closeEnginePool();
  await closeDatabase();
}, 120_000);

describe("the permission sweep's table", () => {
  it("has a row for every route handler, and no row for a route that is gone", () => {
    const discovered = routes.map((route) => route.key).sort();
    expect(discovered.length).toBeGreaterThan(40);
    const missing = discovered.filter((key) => !(key in routeTable));
    const stale = Object.keys(routeTable).filter((key) => !discovered.includes(key));
    expect(missing, "routes without a row in tests/integration/permission-sweep.test.ts").toEqual([]);
    expect(stale, "rows for routes that no longer exist").toEqual([]);
  });

  it("has a row for every server action", async () => {
    const discovered = await serverActionExports();
    expect(discovered.filter((key) => !(key in actionTable))).toEqual([]);
    expect(Object.keys(actionTable).filter((key) => !discovered.includes(key))).toEqual([]);
  });
});

describe("every route as every caller", () => {
  it("answers each caller as the table says", async () => {
    const failures: string[] = [];
    let calls = 0;
    for (const route of routes) {
      const row = routeTable[route.key];
      if (!row || row.notCalled) continue;
      // Refusals change nothing, so the refused callers share one world; each allowed caller gets a fresh one.
      let shared: World | null = null;
      for (const caller of callers) {
        const expected = row.expect[caller];
        const world: World = expected === "allowed" ? await buildWorld() : (shared ??= await buildWorld());
        const response = await call(route, row, caller, world);
        calls += 1;
        if (!matches(expected, response.status)) {
          const body = await response.text();
          failures.push(`${route.key} as ${caller}: expected ${expected}, got ${response.status} ${body.slice(0, 160)}`);
        }
      }
    }
    expect(failures).toEqual([]);
    // Every listed route but next-auth's was called by every caller.
    const called = routes.filter((route) => !routeTable[route.key]?.notCalled).length;
    expect(calls).toBe(called * callers.length);
  }, 600_000);
});

describe("cross-site requests, swept over every state-changing route", () => {
  it("refuses a foreign Origin, and a foreign Referer without Origin, even for a lead, before anything happens", async () => {
    const world = await buildWorld();
    signInAs(world.users.lead);
    const unsafe = routes.filter((route) => !["GET", "HEAD", "OPTIONS"].includes(route.method) && !routeTable[route.key]?.notCalled);
    expect(unsafe.length).toBeGreaterThan(25);
    const failures: string[] = [];
    for (const route of unsafe) {
      const { url, routeParams } = fillTemplate(route.template, world.params);
      const foreign: Record<string, string>[] = [{ origin: "https://attacker.example" }, { origin: "null" }, { referer: "https://attacker.example/page" }];
      for (const headers of foreign) {
        const request = new Request(`http://localhost${url}`, {
          method: route.method,
          headers: { ...headers, "content-type": "text/plain", "content-length": "2" },
          body: route.method === "DELETE" ? undefined : "{}",
        });
        const response = await route.handler(request, { params: Promise.resolve(routeParams) });
        const body = (await response.json()) as { error?: { code?: string } };
        if (response.status !== 403 || body.error?.code !== "forbidden:origin")
          failures.push(`${route.key} with ${JSON.stringify(headers)}: ${response.status}`);
      }
    }
    expect(failures).toEqual([]);
  });
});
