// More than one machine's worth of Holonomy on one PostgreSQL: two app
// instances (`next start`, the production build), two collaboration servers
// and two queue workers, each its own process, as docs/deploy.md lays out. Each
// app names its own collaboration server in the tickets it hands out, so two
// people signed in on different app instances edit through different
// collaboration servers. Shown:
//   - they edit the same derivation at once and converge, and each app serves
//     the result;
//   - a simulation queued through one app instance is run by the queue worker
//     started beside the other (the worker beside the first is stopped first).
// No browser is involved: the clients are HTTP sessions and y-websocket
// providers in this process, the protocol the pages speak.
import { existsSync } from "node:fs";
import path from "node:path";
import { expect, test } from "@playwright/test";
import type { Model } from "@/lib/mechanics/browser";
import { modelToDocument, type DerivationDocument } from "@/lib/notebook/document";
import { fieldText } from "@/lib/notebook/document/shared-doc";
import { connectCollabClient, type CollabClient } from "../support/collab-client";
import { signInOverHttp } from "../support/http-session";
import { freePort, startPrivatePostgres, type PrivatePostgres } from "../support/private-postgres";
import { answersOk, startService, waitUntil, type ServiceProcess } from "../support/service-process";
import { migrateAndSeedTeam, type SeededTeam } from "../support/seeded-team";

const ROOT = path.resolve(import.meta.dirname, "../..");

// A test rig's seat on a spring and damper, one coordinate.
const seat: Model = {
  title: "Seat rig bounce",
  coordinates: [{ name: "z", unit: "m" }],
  parameters: [
    { name: "m", unit: "kg", value: 95 },
    { name: "k", unit: "N/m", value: 42000 },
  ],
  kinetic: "1/2*m*z'^2",
  potential: "1/2*k*z^2",
};

test.describe.configure({ mode: "serial" });

test("two app instances, two collaboration servers and two workers share one database", async ({ browserName: _ }, testInfo) => {
  test.setTimeout(6 * 60_000);
  const log = (message: string) => console.log(`[instances] ${message}`);
  let database: PrivatePostgres | null = null;
  const services = new Map<string, ServiceProcess>();
  const editors: CollabClient[] = [];
  try {
    if (!existsSync(path.join(ROOT, ".next", "BUILD_ID")))
      throw new Error("no production build: run `npx next build` first (npm test builds before this suite)");
    database = await startPrivatePostgres({ database: "holonomy_instances" });
    const ports = { appA: await freePort(), appB: await freePort(), collabA: await freePort(), collabB: await freePort() };
    const common: Record<string, string | undefined> = {
      ...process.env,
      DATABASE_URL: database.url,
      NEXT_TELEMETRY_DISABLED: "1",
      AWS_SDK_JS_NODE_VERSION_SUPPORT_WARNING_DISABLED: "true",
    };
    // next start picks production itself; the ticket route names the collaboration server from COLLAB_PORT.
    delete common.NODE_ENV;
    delete common.COLLAB_PUBLIC_URL;
    const envFor = (extra: Record<string, string>) => ({ ...common, ...extra }) as NodeJS.ProcessEnv;
    const baseEnv = envFor({});
    const people = await migrateAndSeedTeam(baseEnv, "Kestrel twin site");

    const start = (name: string, args: string[], env: NodeJS.ProcessEnv) => {
      const service = startService({ name, args, cwd: ROOT, env, logFile: testInfo.outputPath(`${name}.log`) });
      services.set(name, service);
      return service;
    };
    const node = ["--conditions=react-server", "--import", "tsx"];
    const next = path.join(ROOT, "node_modules/next/dist/bin/next");
    const site = (side: "A" | "B") => {
      const appPort = side === "A" ? ports.appA : ports.appB;
      const collabPort = side === "A" ? ports.collabA : ports.collabB;
      return envFor({ NEXTAUTH_URL: `http://localhost:${appPort}`, COLLAB_PORT: String(collabPort) });
    };
    const workers = { A: start("worker-A", [...node, "scripts/worker.ts"], site("A")), B: start("worker-B", [...node, "scripts/worker.ts"], site("B")) };
    start("collab-A", [...node, "server/collab.ts"], site("A"));
    start("collab-B", [...node, "server/collab.ts"], site("B"));
    start("app-A", [next, "start", "-H", "127.0.0.1", "-p", String(ports.appA)], site("A"));
    start("app-B", [next, "start", "-H", "127.0.0.1", "-p", String(ports.appB)], site("B"));
    await Promise.all([
      waitUntil(() => workers.A.output().includes("ready"), "worker A", 90_000),
      waitUntil(() => workers.B.output().includes("ready"), "worker B", 90_000),
      waitUntil(() => answersOk(`http://127.0.0.1:${ports.collabA}/collab/health`), "collaboration server A", 90_000),
      waitUntil(() => answersOk(`http://127.0.0.1:${ports.collabB}/collab/health`), "collaboration server B", 90_000),
      waitUntil(() => answersOk(`http://127.0.0.1:${ports.appA}/api/health`), "app A", 90_000),
      waitUntil(() => answersOk(`http://127.0.0.1:${ports.appB}/api/health`), "app B", 90_000),
    ]);
    log(`apps on ${ports.appA} and ${ports.appB}, collaboration servers on ${ports.collabA} and ${ports.collabB}`);

    // ---- two people, each on their own app instance ------------------------------------
    const signIn = (side: "A" | "B", role: keyof SeededTeam["members"]) => {
      const port = side === "A" ? ports.appA : ports.appB;
      return signInOverHttp({
        base: `http://127.0.0.1:${port}`,
        origin: `http://localhost:${port}`,
        email: people.members[role].email,
        password: people.password,
      });
    };
    const [analyst, lead] = await Promise.all([signIn("A", "analyst"), signIn("B", "lead")]);

    const content: DerivationDocument = modelToDocument(seat);
    content.cells.push({ id: "rignotes", kind: "note", collapsed: false, markdown: "" });
    const created = await analyst.request<{ derivation: { id: string } }>("POST", `/api/teams/${people.teamId}/derivations`, {
      title: "Seat rig, twin site",
      content,
    });
    expect(created.status).toBe(201);
    const derivationId = created.body.derivation.id;

    // ---- co-editing through different collaboration servers -----------------------------
    const tickets = await Promise.all(
      [analyst, lead].map(async (session) => {
        const answer = await session.request<{ token: string; url: string }>("POST", `/api/derivations/${derivationId}/collab-token`);
        expect(answer.status).toBe(200);
        return answer.body;
      }),
    );
    // Each app hands out its own collaboration server.
    expect(new URL(tickets[0]!.url).port).toBe(String(ports.collabA));
    expect(new URL(tickets[1]!.url).port).toBe(String(ports.collabB));
    for (const ticket of tickets) editors.push(connectCollabClient(ticket.url, derivationId, ticket.token));
    await waitUntil(() => editors.every((editor) => editor.syncs > 0), "both editors synced");
    const notes = (editor: CollabClient) => fieldText(editor.doc, "rignotes", "markdown")!;
    // Both type at once, ten markers each.
    for (let i = 0; i < 10; i++) {
      notes(editors[0]!).insert(0, `[A${i}]`);
      notes(editors[1]!).insert(notes(editors[1]!).length, `[B${i}]`);
      await new Promise((resolve) => setTimeout(resolve, 20));
    }
    const everyMarker = (text: string) => Array.from({ length: 10 }, (_, i) => [`[A${i}]`, `[B${i}]`]).every((pair) => pair.every((m) => text.includes(m)));
    await waitUntil(() => editors.every((editor) => everyMarker(notes(editor).toString())), "both editors see every marker", 30_000);
    expect(notes(editors[0]!).toString()).toBe(notes(editors[1]!).toString());
    await waitUntil(() => editors.every((editor) => editor.storedClock() >= editor.ownClock()), "every edit stored", 30_000);
    // Each app instance serves the merged document (its JSON copy, written by the collaboration servers).
    for (const session of [analyst, lead]) {
      await waitUntil(
        async () => {
          const answer = await session.request<{ derivation: { content: DerivationDocument } }>("GET", `/api/derivations/${derivationId}`);
          const cell = answer.body.derivation?.content.cells.find((c) => c.id === "rignotes") as { markdown?: string } | undefined;
          return answer.status === 200 && everyMarker(cell?.markdown ?? "");
        },
        "each app serving the merged notes",
        30_000,
      );
    }
    log(`converged: ${notes(editors[0]!).length} characters on both servers`);

    // ---- a job queued on app A, run by the worker beside app B --------------------------
    await workers.A.kill("SIGTERM");
    const queued = await analyst.request<{ job: { id: string; state: string } }>(
      "POST",
      `/api/derivations/${derivationId}/runs`,
      { initialCoordinates: { z: 0.01 }, endTime: 2, outputStep: 0.01, label: "twin-site bounce" },
      { prefer: "respond-async" },
    );
    expect(queued.status).toBe(202);
    const jobId = queued.body.job.id;
    let state = queued.body.job.state;
    await waitUntil(
      async () => {
        const answer = await lead.request<{ job: { state: string } }>("GET", `/api/derivations/${derivationId}/jobs/${jobId}`);
        state = answer.body.job?.state ?? state;
        return ["completed", "failed", "cancelled"].includes(state);
      },
      "the job to end",
      60_000,
    );
    expect(state).toBe("completed");
    expect(workers.B.output()).toMatch(new RegExp(`queue worker ${workers.B.child.pid} took \\w+ job ${jobId}`));
    expect(workers.A.output()).not.toContain(jobId);
    log(`job ${jobId} queued on app A ran in worker B (pid ${workers.B.child.pid})`);
  } finally {
    for (const editor of editors) editor.destroy();
    for (const service of services.values()) await service.kill("SIGTERM");
    await database?.remove();
  }
});
