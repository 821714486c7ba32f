// Two collaboration servers against one PostgreSQL, as with more than one
// machine: clients of the same derivation connected to different instances
// edit together and converge, see each other's presence, and keep converging
// after an instance's listening connection is cut. The instances run in this
// process but share nothing in memory: each has its own rooms, its own
// listening connection and its own instance id, and hears of the other's
// stored updates only through NOTIFY and the update table.
import { isDeepStrictEqual } from "node:util";
import { Client } from "pg";
import { afterAll, beforeAll, beforeEach, describe, expect, it } from "vitest";
import * as Y from "yjs";
import { closeDatabase } from "@/db/client";
import { SHARED_DOC_CHANNEL, appendSharedDocUpdate, compactSharedDocById, readSharedDocUpdatesOn } from "@/db/queries/collab";
import { createDerivation, getDerivationById } from "@/db/queries/derivations";
import { env } from "@/lib/env";
import { blankDocument, type DerivationDocument } from "@/lib/notebook/document";
import { fieldText, yDocToDocument, yDocToJson } from "@/lib/notebook/document/shared-doc";
import type { Logger } from "@/server/collab/types";
import { makeTeam, resetDatabase, type TeamFixture } from "../support/fixtures";
import { connectClient, startCollabServer, storedDoc, tokenFor, waitFor, type RunningServer, type TestClient } from "./support";

let kestrel: TeamFixture;
let east: RunningServer;
let west: RunningServer;
const warnings: string[] = [];
const clients: TestClient[] = [];

const recordingLogger: Logger = {
  info: () => undefined,
  warn: (message) => warnings.push(message),
  error: (message, error) => console.error(message, error),
};

function track(client: TestClient): TestClient {
  clients.push(client);
  return client;
}

async function newDerivation(title: string) {
  const content = blankDocument(title);
  const derivation = await createDerivation({ teamId: kestrel.team.id, title, ownerId: kestrel.members.analyst.id, content });
  const kinetic = (derivation.content as DerivationDocument).cells.find((cell) => cell.kind === "kinetic")!.id;
  return { derivation, kinetic };
}

async function connect(server: RunningServer, userId: string, derivationId: string): Promise<TestClient> {
  const client = track(connectClient(server.url, derivationId, await tokenFor(userId, derivationId)));
  await waitFor(() => client.provider.synced, "first sync");
  return client;
}

const textOf = (doc: Y.Doc, cellId: string) => fieldText(doc, cellId, "expr")!.toString();

beforeAll(async () => {
  await resetDatabase();
  kestrel = await makeTeam("Kestrel gantry cell");
  east = await startCollabServer({}, recordingLogger);
  west = await startCollabServer({}, recordingLogger);
});

beforeEach(() => {
  for (const client of clients.splice(0)) client.destroy();
  warnings.length = 0;
});

afterAll(async () => {
  for (const client of clients.splice(0)) client.destroy();
  await east.server.close();
  await west.server.close();
  await closeDatabase();
});

describe("two collaboration instances", () => {
  it("have distinct instance ids", () => {
    expect(east.server.instanceId).toMatch(/^[0-9a-f]{12}$/);
    expect(west.server.instanceId).toMatch(/^[0-9a-f]{12}$/);
    expect(east.server.instanceId).not.toBe(west.server.instanceId);
  });

  it("converge when two people on different instances type into the same field", { timeout: 60_000 }, async () => {
    const { derivation, kinetic } = await newDerivation("Gantry trolley sway");
    const analyst = await connect(east, kestrel.members.analyst.id, derivation.id);
    const lead = await connect(west, kestrel.members.lead.id, derivation.id);

    // Interleaved typing from both sides, some of it at the same moment.
    for (let i = 0; i < 40; i += 1) {
      const a = fieldText(analyst.doc, kinetic, "expr")!;
      a.insert(Math.floor(a.length / 2), "m");
      const b = fieldText(lead.doc, kinetic, "expr")!;
      b.insert(b.length, i % 2 === 0 ? "x'" : "+");
      if (i % 5 === 0) await new Promise((resolve) => setTimeout(resolve, 10));
    }
    const eastDoc = () => east.server.rooms.get(derivation.id)!.doc;
    const westDoc = () => west.server.rooms.get(derivation.id)!.doc;
    await waitFor(
      () =>
        analyst.allStored() &&
        lead.allStored() &&
        [analyst.doc, lead.doc, westDoc()].every((doc) => isDeepStrictEqual(Y.encodeStateVector(doc), Y.encodeStateVector(eastDoc()))),
      "both clients acknowledged and every copy in step",
      20_000,
    );
    const text = textOf(eastDoc(), kinetic);
    // Every keystroke of both: 40 × "m", 20 × "x'", 20 × "+".
    expect(text.length).toBe(40 + 20 * 2 + 20);
    for (const doc of [analyst.doc, lead.doc, westDoc()]) expect(textOf(doc, kinetic)).toBe(text);
    const expected = yDocToJson(eastDoc());
    expect(yDocToJson(westDoc())).toEqual(expected);
    expect(yDocToJson(await storedDoc(derivation.id))).toEqual(expected);
    const document = yDocToDocument(eastDoc());
    await waitFor(async () => isDeepStrictEqual((await getDerivationById({ id: derivation.id }))?.content, document), "the JSON copy");
  });

  it("announce only the key of a stored update, with the instance that stored it", async () => {
    const { derivation, kinetic } = await newDerivation("Gimbal yaw stage");
    const listener = new Client({ connectionString: env.DATABASE_URL });
    await listener.connect();
    const payloads: string[] = [];
    listener.on("notification", (message) => {
      if (message.channel === SHARED_DOC_CHANNEL && message.payload?.startsWith(derivation.id)) payloads.push(message.payload);
    });
    await listener.query(`LISTEN ${SHARED_DOC_CHANNEL}`);
    try {
      const analyst = await connect(east, kestrel.members.analyst.id, derivation.id);
      // A long insert: its update is far larger than the announcement.
      fieldText(analyst.doc, kinetic, "expr")!.insert(0, "1/2*m*v^2 + ".repeat(400));
      await waitFor(() => analyst.allStored() && payloads.length > 0, "the announcement");
      expect(payloads[0]).toMatch(new RegExp(`^${derivation.id}:\\d+:${east.server.instanceId}$`));
      // The announced row holds the update, thousands of bytes; the announcement is a few dozen.
      const rows = await readSharedDocUpdatesOn(listener, [Number(payloads[0]!.split(":")[1])]);
      expect(rows.map((row) => row.derivationId)).toEqual([derivation.id]);
      expect(rows[0]!.update.byteLength).toBeGreaterThan(4000);
      expect(payloads[0]!.length).toBeLessThan(100);
    } finally {
      await listener.end();
    }
  });

  it("relay presence both ways, and its removal when a person leaves", async () => {
    const { derivation } = await newDerivation("Hoist drum brake");
    const analyst = await connect(east, kestrel.members.analyst.id, derivation.id);
    const lead = await connect(west, kestrel.members.lead.id, derivation.id);
    analyst.provider.awareness.setLocalStateField("user", { name: "Analyst", colour: "#2a6f97" });
    lead.provider.awareness.setLocalStateField("user", { name: "Lead", colour: "#a4161a" });
    await waitFor(
      () =>
        (lead.provider.awareness.getStates().get(analyst.doc.clientID) as { user?: { name: string } } | undefined)?.user?.name === "Analyst" &&
        (analyst.provider.awareness.getStates().get(lead.doc.clientID) as { user?: { name: string } } | undefined)?.user?.name === "Lead",
      "each sees the other's presence",
    );
    // A cursor move (a later state) follows.
    analyst.provider.awareness.setLocalStateField("cursor", { anchor: 3, head: 5 });
    await waitFor(
      () => isDeepStrictEqual((lead.provider.awareness.getStates().get(analyst.doc.clientID) as { cursor?: unknown })?.cursor, { anchor: 3, head: 5 }),
      "the cursor",
    );
    analyst.destroy();
    await waitFor(() => !lead.provider.awareness.getStates().has(analyst.doc.clientID), "the analyst's presence removed on the other instance");
  });

  it("tell a newly loaded instance who is already there", async () => {
    const { derivation } = await newDerivation("Test rig shaker table");
    const analyst = await connect(east, kestrel.members.analyst.id, derivation.id);
    analyst.provider.awareness.setLocalStateField("user", { name: "Analyst" });
    await waitFor(() => east.server.rooms.get(derivation.id)?.awareness.getStates().has(analyst.doc.clientID) ?? false, "presence on its own instance");
    // West loads the document only now; the analyst's presence is not renewed meanwhile.
    const lead = await connect(west, kestrel.members.lead.id, derivation.id);
    await waitFor(() => lead.provider.awareness.getStates().has(analyst.doc.clientID), "presence of a person on the other instance", 5_000);
  });

  it("drop presence too large for a notification, with a warning, and keep it on its own instance", async () => {
    const { derivation } = await newDerivation("Crane slewing ring");
    const analyst = await connect(east, kestrel.members.analyst.id, derivation.id);
    const nearby = await connect(east, kestrel.members.reviewer.id, derivation.id);
    const lead = await connect(west, kestrel.members.lead.id, derivation.id);
    analyst.provider.awareness.setLocalStateField("note", "x".repeat(7000));
    await waitFor(
      () => (nearby.provider.awareness.getStates().get(analyst.doc.clientID) as { note?: string } | undefined)?.note?.length === 7000,
      "presence on the same instance",
    );
    await waitFor(() => warnings.some((warning) => warning.includes(`client ${analyst.doc.clientID}`)), "the warning");
    // A small one afterwards still crosses.
    analyst.provider.awareness.setLocalState({ user: { name: "Analyst" } });
    await waitFor(
      () => (lead.provider.awareness.getStates().get(analyst.doc.clientID) as { user?: { name: string } } | undefined)?.user?.name === "Analyst",
      "the smaller presence",
    );
  });

  it("resync after the listening connection of an instance is cut", { timeout: 30_000 }, async () => {
    const { derivation, kinetic } = await newDerivation("Gimbal pitch damper");
    const analyst = await connect(east, kestrel.members.analyst.id, derivation.id);
    const lead = await connect(west, kestrel.members.lead.id, derivation.id);
    // Cut west's LISTEN connection (found by its application name); edits on east meanwhile are announced to nobody there.
    const admin = new Client({ connectionString: env.DATABASE_URL });
    await admin.connect();
    try {
      const cut = await admin.query<{ done: boolean }>("select pg_terminate_backend(pid) as done from pg_stat_activity where application_name = $1", [
        `holonomy-collab-${west.server.instanceId}`,
      ]);
      expect(cut.rows.map((row) => row.done)).toEqual([true]);
    } finally {
      await admin.end();
    }
    fieldText(analyst.doc, kinetic, "expr")!.insert(0, "1/2*J*phi'^2");
    await waitFor(() => analyst.allStored(), "the edit stored");
    // West reconnects (after about a second) and reads everything stored.
    await waitFor(() => textOf(lead.doc, kinetic) === "1/2*J*phi'^2", "the edit on the other instance after its reconnect", 15_000);
    expect(warnings.some((warning) => warning.includes("notification connection lost"))).toBe(true);
  });

  it("read everything when an announced row was folded by a compaction first", async () => {
    const { derivation, kinetic } = await newDerivation("Trolley rail stop");
    const lead = await connect(west, kestrel.members.lead.id, derivation.id);
    // An update stored without an announcement (as if its notification were lost), then folded away.
    const elsewhere = await storedDoc(derivation.id);
    const before = Y.encodeStateVector(elsewhere);
    fieldText(elsewhere, kinetic, "expr")!.insert(0, "m*v^2");
    expect((await appendSharedDocUpdate({ derivationId: derivation.id, update: Y.encodeStateAsUpdate(elsewhere, before) })).status).toBe("stored");
    await compactSharedDocById({ derivationId: derivation.id });
    expect(textOf(lead.doc, kinetic)).toBe("");
    // An announcement of a row that no longer exists: the instance rereads the document's rows.
    const admin = new Client({ connectionString: env.DATABASE_URL });
    await admin.connect();
    try {
      await admin.query("select pg_notify($1, $2)", [SHARED_DOC_CHANNEL, `${derivation.id}:${Number.MAX_SAFE_INTEGER}:feedfacecafe`]);
    } finally {
      await admin.end();
    }
    await waitFor(() => textOf(lead.doc, kinetic) === "m*v^2", "the folded update on the other instance's client");
    expect(textOf(west.server.rooms.get(derivation.id)!.doc, kinetic)).toBe("m*v^2");
  });
});
