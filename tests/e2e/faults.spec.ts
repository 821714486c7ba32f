// Faults under load: while people edit a derivation together, comment, name
// checkpoints, take derivations through review to approval and run simulations,
// the app server is killed (SIGKILL), the collaboration server is killed (SIGKILL)
// and PostgreSQL crashes and restarts. Afterwards every client is connected again
// and nothing that was acknowledged is missing:
//   edits      — an edit the collaboration server acknowledged as stored (message type 100);
//   comments   — a comment thread answered 201;
//   revisions  — a checkpoint or review request answered 201 with its revision;
//   approvals  — an approval answered 200;
//   runs       — a simulation job that the page saw completed (its run id).
// It prints one JSON line with, per kind, how many were acknowledged and how many of
// those were found again, and fails on any loss.
//
// The stack is the real one, on a PostgreSQL cluster of this test's own (the suite's
// shared cluster is never stopped): the production build served by `next start`
// (`npm test` builds it before the browser suite), the collaboration server
// (server/collab.ts) and a queue worker (scripts/worker.ts), each its own process.
// No browser is involved: the clients are HTTP sessions and y-websocket providers in
// this process, the same protocol the pages speak.
import { existsSync } from "node:fs";
import path from "node:path";
import { expect, test } from "@playwright/test";
import { toLatexTerms, type Model } from "@/lib/mechanics/browser";
import { modelToDocument, type DerivationDocument } from "@/lib/notebook/document";
import { fieldText } from "@/lib/notebook/document/shared-doc";
import { connectCollabClient, type CollabClient } from "../support/collab-client";
import { signInOverHttp, type HttpSession } from "../support/http-session";
import { freePort, startPrivatePostgres, type PrivatePostgres } from "../support/private-postgres";
import { answersOk, startService, waitUntil, type ServiceProcess } from "../support/service-process";
import { migrateAndSeedTeam, type SeededTeam } from "../support/seeded-team";

const ROOT = path.resolve(import.meta.dirname, "../..");

// A hoist's hook block swinging on its ropes, modelled as a point mass on a rigid link.
const hookBlock: Model = {
  title: "Hook block sway",
  coordinates: [{ name: "theta", unit: "rad" }],
  parameters: [
    { name: "m", unit: "kg", value: 850 },
    { name: "l", unit: "m", value: 12 },
    { name: "g", unit: "m/s^2", value: 9.81 },
  ],
  kinetic: "1/2*m*l^2*theta'^2",
  potential: "-m*g*l*cos(theta)",
};

// The gravity term of its equation of motion, where the reviewer's threads are anchored.
const gravityTerm = toLatexTerms("m*l^2*theta'' + m*g*l*sin(theta)").terms[1]!;

/** The phases of the script; every acknowledgement records the phase it arrived in. */
type Phase = "warm-up" | "app killed" | "after app restart" | "collab killed" | "after collab restart" | "database down" | "after database restart" | "drain";

interface Tally {
  acknowledged: number;
  found: number;
}

test.describe.configure({ mode: "serial" });

test("no acknowledged work is lost when the app, the collaboration server and PostgreSQL fail", async ({ browserName: _ }, testInfo) => {
  test.setTimeout(10 * 60_000);
  const log = (message: string) => console.log(`[faults] ${message}`);
  let phase: Phase = "warm-up";
  let database: PrivatePostgres | null = null;
  const services = new Map<string, ServiceProcess>();
  const editors: CollabClient[] = [];

  try {
    // ---- the stack, on a database of its own --------------------------------------------
    if (!existsSync(path.join(ROOT, ".next", "BUILD_ID")))
      throw new Error("no production build: run `npx next build` first (npm test builds before this suite)");
    database = await startPrivatePostgres({ database: "holonomy_faults" });
    const appPort = await freePort();
    const collabPort = await freePort();
    const base = `http://127.0.0.1:${appPort}`;
    const origin = `http://localhost:${appPort}`;
    const variables: Record<string, string | undefined> = {
      ...process.env,
      DATABASE_URL: database.url,
      NEXTAUTH_URL: origin,
      COLLAB_PORT: String(collabPort),
      NEXT_TELEMETRY_DISABLED: "1",
      AWS_SDK_JS_NODE_VERSION_SUPPORT_WARNING_DISABLED: "true",
    };
    // next start picks production itself; the token route names the collaboration server from COLLAB_PORT.
    delete variables.NODE_ENV;
    delete variables.COLLAB_PUBLIC_URL;
    const env = variables as NodeJS.ProcessEnv;
    const people = await migrateAndSeedTeam(env, "Kestrel fault bench");
    log(`database ready on port ${database.port}`);

    const start = {
      collab: async () => {
        const service = startService({
          name: "collab",
          args: ["--conditions=react-server", "--import", "tsx", "server/collab.ts"],
          cwd: ROOT,
          env,
          logFile: testInfo.outputPath("collab.log"),
        });
        services.set("collab", service);
        await waitUntil(() => answersOk(`http://127.0.0.1:${collabPort}/collab/health`), "the collaboration server", 90_000);
      },
      worker: async () => {
        const service = startService({
          name: "worker",
          args: ["--conditions=react-server", "--import", "tsx", "scripts/worker.ts"],
          cwd: ROOT,
          env,
          logFile: testInfo.outputPath("worker.log"),
        });
        services.set("worker", service);
        await waitUntil(() => service.output().includes("ready"), "the queue worker", 90_000);
      },
      app: async () => {
        const service = startService({
          name: "app",
          args: [path.join(ROOT, "node_modules/next/dist/bin/next"), "start", "-H", "127.0.0.1", "-p", String(appPort)],
          cwd: ROOT,
          env,
          logFile: testInfo.outputPath("app.log"),
        });
        services.set("app", service);
        await waitUntil(() => answersOk(`${base}/api/health`), "the app", 90_000);
      },
    };
    await Promise.all([start.collab(), start.worker(), start.app()]);
    log(`app on ${appPort}, collaboration server on ${collabPort}`);

    // ---- people and data ---------------------------------------------------------------
    const signIn = (role: keyof SeededTeam["members"]) => signInOverHttp({ base, origin, email: people.members[role].email, password: people.password });
    const [lead, analyst, reviewer] = await Promise.all([signIn("lead"), signIn("analyst"), signIn("reviewer")]);
    const teamId = people.teamId;
    const reviewerId = people.members.reviewer.id;

    const sharedContent: DerivationDocument = modelToDocument(hookBlock);
    sharedContent.cells.push({ id: "sitenotes", kind: "note", collapsed: false, markdown: "Site notes:" });
    const shared = await analyst.request<{ derivation: { id: string } }>("POST", `/api/teams/${teamId}/derivations`, {
      title: "Hook block sway, shared",
      content: sharedContent,
    });
    expect(shared.status).toBe(201);
    const sharedId = shared.body.derivation.id;
    const simulated = await analyst.request<{ derivation: { id: string } }>("POST", `/api/teams/${teamId}/derivations`, {
      title: "Hook block sway, runs",
      content: modelToDocument(hookBlock),
    });
    expect(simulated.status).toBe(201);
    const simulatedId = simulated.body.derivation.id;

    // ---- the acknowledgements ----------------------------------------------------------
    const acks = {
      edits: new Map<string, Phase>(),
      comments: new Map<string, Phase>(),
      revisions: new Map<string, { derivationId: string; phase: Phase }>(),
      approvals: new Map<string, { derivationId: string; phase: Phase }>(),
      runs: new Map<string, Phase>(),
    };
    const refused = { edits: 0, comments: 0, revisions: 0, approvals: 0, runs: 0 };
    let active = true;
    const pause = (ms: number) => new Promise((resolve) => setTimeout(resolve, ms));
    /** One request; a broken connection (the app is down) counts as an answer of status 0. */
    const attempt = async <T>(session: HttpSession, method: string, url: string, body?: unknown, headers?: Record<string, string>) =>
      session.request<T>(method, url, body, headers).catch(() => ({ status: 0, body: {} as T }));

    // Editing: two people type markers into the same note; a marker is acknowledged once the
    // server's "stored" state vector covers the typist's clock right after typing it.
    const tokenFor = async (session: HttpSession) => {
      const answer = await session.request<{ token: string; url: string }>("POST", `/api/derivations/${sharedId}/collab-token`);
      if (answer.status !== 200) throw new Error(`collab-token answered ${answer.status}`);
      return answer.body;
    };
    const typed: { marker: string; client: CollabClient; clock: number }[] = [];
    for (const session of [analyst, lead]) {
      const ticket = await tokenFor(session);
      const client = connectCollabClient(ticket.url, sharedId, ticket.token);
      // Like the page, fetch a fresh ticket for the next connection whenever one closes.
      client.provider.on("connection-close", () => {
        void tokenFor(session).then(
          (next) => client.setToken(next.token),
          () => undefined,
        );
      });
      editors.push(client);
    }
    await waitUntil(() => editors.every((client) => client.provider.synced), "the editors' first sync", 30_000);
    const noteAcks = () => {
      for (const entry of typed) {
        if (!acks.edits.has(entry.marker) && entry.client.storedClock() >= entry.clock) acks.edits.set(entry.marker, phase);
      }
    };
    const editing = (async () => {
      let counter = 0;
      while (active) {
        for (const [index, client] of editors.entries()) {
          const text = fieldText(client.doc, "sitenotes", "markdown")!;
          const marker = `[${"al"[index]}${(counter += 1)}]`;
          text.insert(text.length, marker);
          typed.push({ marker, client, clock: client.ownClock() });
        }
        noteAcks();
        await pause(120);
      }
    })();

    // Commenting: the reviewer starts threads on a term of the shared derivation.
    const commenting = (async () => {
      let counter = 0;
      while (active) {
        const body = `Check the rope stretch at full payout (note ${(counter += 1)}).`;
        const answer = await attempt<{ thread: { id: string; comments: { id: string }[] } }>(reviewer, "POST", `/api/derivations/${sharedId}/comments`, {
          anchor: { kind: "term", cellId: "equations", coordinate: "theta", termId: gravityTerm.id, termText: gravityTerm.text, termLatex: gravityTerm.latex },
          body,
        });
        if (answer.status === 201) acks.comments.set(answer.body.thread.comments[0]!.id, phase);
        else refused.comments += 1;
        await pause(answer.status === 201 ? 250 : 400);
      }
    })();

    // Checkpoints: the analyst names the shared derivation's current content now and then.
    const checkpointing = (async () => {
      let counter = 0;
      while (active) {
        const answer = await attempt<{ revision: { id: string } }>(analyst, "POST", `/api/derivations/${sharedId}/revisions`, {
          name: `Site survey ${(counter += 1)}`,
        });
        if (answer.status === 201) acks.revisions.set(answer.body.revision.id, { derivationId: sharedId, phase });
        else refused.revisions += 1;
        await pause(answer.status === 201 ? 900 : 400);
      }
    })();

    // Review and approval: derivation after derivation goes draft → review → signed off →
    // approved. Each step reads the state first, so an answer lost to a fault is simply redone.
    const approved: string[] = [];
    const approving = (async () => {
      for (let index = 1; active; index += 1) {
        let derivationId: string | null = null;
        while (active && derivationId === null) {
          // The Idempotency-Key makes a create whose answer was lost safe to send again.
          const created = await attempt<{ derivation: { id: string } }>(
            analyst,
            "POST",
            `/api/teams/${teamId}/derivations`,
            { title: `Jib slew brake ${index}` },
            { "idempotency-key": `fault-approval-${index}` },
          );
          if (created.status === 201 || created.status === 200) derivationId = created.body.derivation.id;
          else await pause(300);
        }
        while (active && derivationId) {
          const state = await attempt<ReviewState>(analyst, "GET", `/api/derivations/${derivationId}/review`);
          if (state.status !== 200) {
            await pause(300);
            continue;
          }
          if (state.body.status === "approved") {
            approved.push(derivationId);
            break;
          }
          if (state.body.status === "draft") {
            const asked = await attempt<{ revision: { id: string } }>(analyst, "POST", `/api/derivations/${derivationId}/review`, {
              reviewerIds: [reviewerId],
            });
            if (asked.status === 201) acks.revisions.set(asked.body.revision.id, { derivationId, phase });
            else refused.revisions += 1;
          } else if (state.body.assignments.some((assignment) => assignment.decision === "pending")) {
            await attempt(reviewer, "POST", `/api/derivations/${derivationId}/review/decision`, { decision: "signed_off" });
          } else {
            const revisions = await attempt<{ revisions: { id: string }[] }>(lead, "GET", `/api/derivations/${derivationId}/revisions`);
            if (revisions.status !== 200) continue;
            const answer = await attempt<{ approval: { id: string } }>(lead, "POST", `/api/derivations/${derivationId}/approve`, {
              revisionId: revisions.body.revisions[0]!.id,
            });
            if (answer.status === 200) acks.approvals.set(answer.body.approval.id, { derivationId, phase });
            else refused.approvals += 1;
          }
        }
      }
    })();

    // Simulations: queued as jobs (202, as the page asks), polled until they end.
    const jobs = new Map<string, { state: string; phase: Phase }>();
    const queueing = (async () => {
      while (active) {
        const answer = await attempt<{ job: { id: string; state: string } }>(
          analyst,
          "POST",
          `/api/derivations/${simulatedId}/runs`,
          { initialCoordinates: { theta: 0.2 }, endTime: 4, outputStep: 0.02, label: `sway check ${jobs.size + 1}` },
          { prefer: "respond-async" },
        );
        if (answer.status === 202) jobs.set(answer.body.job.id, { state: answer.body.job.state, phase });
        else refused.runs += 1;
        await pause(answer.status === 202 ? 1500 : 500);
      }
    })();
    let polling = true;
    const ended = (state: string) => ["completed", "failed", "cancelled"].includes(state);
    const jobPolling = (async () => {
      while (polling) {
        for (const [jobId, job] of jobs) {
          if (ended(job.state)) continue;
          const answer = await attempt<{ job: { state: string; result: { runId?: string } | null } }>(
            analyst,
            "GET",
            `/api/derivations/${simulatedId}/jobs/${jobId}`,
          );
          if (answer.status !== 200) continue;
          job.state = answer.body.job.state;
          if (job.state === "completed" && answer.body.job.result?.runId) acks.runs.set(answer.body.job.result.runId, phase);
        }
        await pause(300);
      }
    })();

    // ---- the faults --------------------------------------------------------------------
    const enter = (next: Phase) => {
      noteAcks();
      phase = next;
      log(`phase: ${next}`);
    };
    const appAnswers = () => answersOk(`${base}/api/health`);
    await pause(6000);

    enter("app killed");
    await services.get("app")!.kill("SIGKILL");
    await pause(2000);
    await start.app();
    enter("after app restart");
    await pause(6000);

    enter("collab killed");
    await services.get("collab")!.kill("SIGKILL");
    await pause(2000);
    await start.collab();
    await waitUntil(() => editors.every((client) => client.provider.wsconnected && client.provider.synced), "the editors to reconnect", 60_000);
    const syncsAfterCollabRestart = editors.map((client) => client.syncs);
    enter("after collab restart");
    await pause(6000);

    enter("database down");
    await database.crash();
    await pause(3000);
    await database.start();
    await waitUntil(appAnswers, "the app to reach the restarted database", 60_000);
    enter("after database restart");
    await pause(8000);

    // ---- drain: stop new work, let acknowledged-or-not work settle ---------------------
    enter("drain");
    active = false;
    await Promise.all([editing, commenting, checkpointing, approving, queueing]);
    await waitUntil(
      () => {
        noteAcks();
        return editors.every((client) => client.provider.synced && client.storedClock() >= client.ownClock());
      },
      "every typed edit to be stored",
      60_000,
    );
    // Queued jobs are waited for, but only a completed job is an acknowledged run: a job whose
    // worker lost the database in its last step is left to pg-boss's expiry and retry, which
    // outlast this test, and is reported below as not completed.
    await waitUntil(() => [...jobs.values()].every((job) => ended(job.state)), "every queued job to end", 90_000).catch(() => undefined);
    polling = false;
    await jobPolling;

    // ---- found again -------------------------------------------------------------------
    // Edits: read from storage, not from the live room. The editors leave (a reconnecting
    // editor would send its edits again) and the collaboration server is killed once more,
    // so the next one loads the document from PostgreSQL; a newcomer opening the derivation
    // then sees every acknowledged marker.
    const reconnects = editors.map((client) => ({ syncs: client.syncs, closedConnections: client.closes.length }));
    for (const client of editors.splice(0)) client.destroy();
    await services.get("collab")!.kill("SIGKILL");
    await start.collab();
    const fresh = await tokenFor(reviewer);
    const newcomer = connectCollabClient(fresh.url, sharedId, fresh.token);
    editors.push(newcomer);
    await waitUntil(() => newcomer.provider.synced, "the newcomer's sync", 30_000);
    const shownText = fieldText(newcomer.doc, "sitenotes", "markdown")!.toString();
    const editsFound = [...acks.edits.keys()].filter((marker) => shownText.includes(marker));
    // ... and the stored JSON copy, which evaluation, export and revisions read, catches up.
    await waitUntil(
      async () => {
        const answer = await analyst.request<{ derivation: { content: DerivationDocument } }>("GET", `/api/derivations/${sharedId}`);
        const note = answer.body.derivation.content.cells.find((cell) => cell.id === "sitenotes");
        return note?.kind === "note" && [...acks.edits.keys()].every((marker) => note.markdown.includes(marker));
      },
      "the JSON copy to hold every acknowledged edit",
      30_000,
    );

    const threads = await lead.request<{ threads: { comments: { id: string }[] }[] }>("GET", `/api/derivations/${sharedId}/comments`);
    const commentIds = new Set(threads.body.threads.flatMap((thread) => thread.comments.map((comment) => comment.id)));

    const revisionIds = new Set<string>();
    for (const derivationId of new Set([...acks.revisions.values()].map((entry) => entry.derivationId))) {
      const answer = await lead.request<{ revisions: { id: string }[] }>("GET", `/api/derivations/${derivationId}/revisions`);
      for (const revision of answer.body.revisions) revisionIds.add(revision.id);
    }

    const approvalIds = new Set<string>();
    for (const derivationId of new Set([...acks.approvals.values()].map((entry) => entry.derivationId))) {
      const answer = await lead.request<ReviewState>("GET", `/api/derivations/${derivationId}/review`);
      for (const approval of answer.body.approvals) approvalIds.add(approval.id);
    }

    const runs = await analyst.request<{ runs: { id: string }[] }>("GET", `/api/derivations/${simulatedId}/runs`);
    const runIds = new Set(runs.body.runs.map((entry) => entry.id));

    const tally = (acknowledged: Iterable<string>, found: (id: string) => boolean): Tally => {
      const ids = [...acknowledged];
      return { acknowledged: ids.length, found: ids.filter(found).length };
    };
    const report = {
      edits: { acknowledged: acks.edits.size, found: editsFound.length },
      comments: tally(acks.comments.keys(), (id) => commentIds.has(id)),
      revisions: tally(acks.revisions.keys(), (id) => revisionIds.has(id)),
      approvals: tally(acks.approvals.keys(), (id) => approvalIds.has(id)),
      runs: tally(acks.runs.keys(), (id) => runIds.has(id)),
    };
    console.log(JSON.stringify(report));
    const byPhase = (phases: Iterable<Phase | { phase: Phase }>) => {
      const counts: Partial<Record<Phase, number>> = {};
      for (const entry of phases) {
        const name = typeof entry === "string" ? entry : entry.phase;
        counts[name] = (counts[name] ?? 0) + 1;
      }
      return counts;
    };
    const detail = {
      typed: typed.length,
      notAcknowledged: { ...refused, edits: typed.length - acks.edits.size },
      jobs: Object.fromEntries(
        ["queued", "running", "completed", "failed", "cancelled"].map((state) => [state, [...jobs.values()].filter((job) => job.state === state).length]),
      ),
      derivationsApproved: approved.length,
      editorReconnects: reconnects,
      acknowledgedByPhase: {
        edits: byPhase(acks.edits.values()),
        comments: byPhase(acks.comments.values()),
        revisions: byPhase(acks.revisions.values()),
        approvals: byPhase(acks.approvals.values()),
        runs: byPhase(acks.runs.values()),
      },
    };
    log(JSON.stringify(detail));
    await testInfo.attach("faults.json", { body: JSON.stringify({ ...report, detail }, null, 2), contentType: "application/json" });

    // Nothing acknowledged is lost.
    for (const [kind, counts] of Object.entries(report)) {
      expect(counts.acknowledged, `${kind} acknowledged`).toBeGreaterThan(0);
      expect(counts.found, `${kind} found of those acknowledged`).toBe(counts.acknowledged);
    }
    // Every edit typed, also while a server was down, was stored in the end.
    expect(acks.edits.size).toBe(typed.length);
    // The clients reconnected: both editors synced again after the collaboration server came back,
    // and every kind of work was acknowledged again after the last fault.
    expect(syncsAfterCollabRestart.every((syncs) => syncs >= 2)).toBe(true);
    for (const [kind, phases] of Object.entries(detail.acknowledgedByPhase)) {
      const afterLastFault = (phases["after database restart"] ?? 0) + (phases.drain ?? 0);
      expect(afterLastFault, `${kind} acknowledged after the database restart`).toBeGreaterThan(0);
    }
  } finally {
    for (const client of editors) client.destroy();
    for (const service of services.values()) await service.kill("SIGTERM");
    await database?.remove();
  }
});

interface ReviewState {
  status: "draft" | "in_review" | "approved";
  assignments: { decision: string }[];
  approvals: { id: string }[];
}
