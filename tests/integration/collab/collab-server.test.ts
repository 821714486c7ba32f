import { randomUUID } from "node:crypto";
import { isDeepStrictEqual } from "node:util";
import { afterAll, beforeAll, beforeEach, describe, expect, it, vi } from "vitest";

vi.mock("@/lib/auth/session", async () => (await import("../support/session")).sessionModule);

import * as restoreRoute from "@/app/api/derivations/[id]/revisions/[revisionId]/restore/route";
import * as checkpointRoute from "@/app/api/derivations/[id]/revisions/route";
import * as tokenRoute from "@/app/api/derivations/[id]/collab-token/route";
import * as derivationRouteModule from "@/app/api/derivations/[id]/route";
import { closeDatabase, db } from "@/db/client";
import { getSharedDocUpdatesById } from "@/db/queries/collab";
import { createDerivation, getDerivationById } from "@/db/queries/derivations";
import { derivations } from "@/db/schema";
import { verifyCollabToken } from "@/lib/collab/token";
import { env } from "@/lib/env";
import { blankDocument, parseStoredDocument, type DerivationDocument } from "@/lib/notebook/document";
import { fieldText, titleText, yDocToDocument } from "@/lib/notebook/document/shared-doc";
import { eq, sql } from "drizzle-orm";
import * as encoding from "lib0/encoding";
import * as Y from "yjs";
import { jsonRequest, makeTeam, params, resetDatabase, storeRawContent, type TeamFixture } from "../support/fixtures";
import { signInAs } from "../support/session";
import { connectClient, rawSocket, startCollabServer, storedDoc, tokenFor, waitFor, type RunningServer, type TestClient } from "./support";

let kestrel: TeamFixture;
let other: TeamFixture;
let running: RunningServer;
const clients: TestClient[] = [];

function track(client: TestClient): TestClient {
  clients.push(client);
  return client;
}

async function newDerivation(content: DerivationDocument = blankDocument("Hoist brake drum")) {
  return createDerivation({ teamId: kestrel.team.id, title: content.title, ownerId: kestrel.members.analyst.id, content });
}

function kineticId(doc: DerivationDocument): string {
  return doc.cells.find((cell) => cell.kind === "kinetic")!.id;
}

beforeAll(async () => {
  await resetDatabase();
  kestrel = await makeTeam("Kestrel hoist bench");
  other = await makeTeam("Other firm");
  running = await startCollabServer();
});

beforeEach(() => {
  for (const client of clients.splice(0)) client.destroy();
});

afterAll(async () => {
  for (const client of clients.splice(0)) client.destroy();
  await running.server.close();
  await closeDatabase();
});

describe("the token route", () => {
  it("issues a short-lived token naming the caller and the derivation, read-only for viewers and reviewers", async () => {
    const derivation = await newDerivation();
    const answers: Record<string, { token: string; url: string; readOnly: boolean; expiresAt: string; user: { id: string; name: string; colour: string } }> =
      {};
    for (const role of ["lead", "analyst", "reviewer", "viewer"] as const) {
      signInAs(kestrel.members[role]);
      const response = await tokenRoute.POST(jsonRequest(`/api/derivations/${derivation.id}/collab-token`, "POST"), params({ id: derivation.id }));
      expect(response.status).toBe(200);
      answers[role] = await response.json();
    }
    expect(Object.fromEntries(Object.entries(answers).map(([role, answer]) => [role, answer.readOnly]))).toEqual({
      lead: false,
      analyst: false,
      reviewer: true,
      viewer: true,
    });
    const analyst = answers.analyst!;
    expect(analyst.url).toBe(env.COLLAB_PUBLIC_URL);
    expect(analyst.user).toMatchObject({ id: kestrel.members.analyst.id, name: kestrel.members.analyst.name });
    expect(analyst.user.colour).toMatch(/^#[0-9a-f]{6}$/);
    const lifetime = new Date(analyst.expiresAt).getTime() - Date.now();
    expect(lifetime).toBeGreaterThan(60_000);
    expect(lifetime).toBeLessThanOrEqual(env.COLLAB_TOKEN_TTL_SECONDS * 1000);
    expect(await verifyCollabToken(analyst.token, { secret: env.NEXTAUTH_SECRET })).toEqual({
      userId: kestrel.members.analyst.id,
      derivationId: derivation.id,
    });
  });

  it("answers 404 to someone outside the team and 401 without a session", async () => {
    const derivation = await newDerivation();
    signInAs(other.members.lead);
    expect((await tokenRoute.POST(jsonRequest("/x", "POST"), params({ id: derivation.id }))).status).toBe(404);
    signInAs(null);
    expect((await tokenRoute.POST(jsonRequest("/x", "POST"), params({ id: derivation.id }))).status).toBe(401);
  });
});

describe("refused connections", () => {
  it("closes with the contract's codes before sending any document byte", async () => {
    const derivation = await newDerivation();
    const analyst = kestrel.members.analyst.id;
    const cases: [string, string, number][] = [
      ["no token", `${running.url}/${derivation.id}`, 4401],
      ["garbage token", `${running.url}/${derivation.id}?token=not-a-token`, 4401],
      ["expired token", `${running.url}/${derivation.id}?token=${await tokenFor(analyst, derivation.id, new Date(Date.now() - 10 * 60_000))}`, 4401],
      ["token for another derivation", `${running.url}/${derivation.id}?token=${await tokenFor(analyst, randomUUID())}`, 4401],
      ["member of another team", `${running.url}/${derivation.id}?token=${await tokenFor(other.members.lead.id, derivation.id)}`, 4403],
      [
        "no such derivation",
        `${running.url}/${derivation.id.replace(/^.{8}/, "00000000")}?token=${await tokenFor(analyst, derivation.id.replace(/^.{8}/, "00000000"))}`,
        4404,
      ],
    ];
    for (const [what, url, code] of cases) {
      const { closed, messages } = rawSocket(url);
      const result = await closed;
      expect({ what, code: result.code }).toEqual({ what, code });
      expect(result.reason).not.toBe("");
      expect(messages).toEqual([]);
    }
  });

  it("stops the provider from reconnecting and tells why", async () => {
    const derivation = await newDerivation();
    const client = track(connectClient(running.url, derivation.id, await tokenFor(other.members.analyst.id, derivation.id)));
    await waitFor(() => client.closed !== null, "the refusal");
    expect(client.closed).toEqual({ code: 4403, reason: "You do not have access to this derivation." });
    await new Promise((resolve) => setTimeout(resolve, 600));
    expect(client.provider.wsconnected || client.provider.wsconnecting).toBe(false);
  });
});

describe("editing", () => {
  it("seeds the shared state from the stored JSON (an old model file) on first load", async () => {
    const derivation = await newDerivation();
    const stored = {
      title: "Hoist drum",
      coordinates: [{ name: "alpha", unit: "rad" }],
      parameters: [{ name: "J", unit: "kg*m^2", value: 14 }],
      kinetic: "1/2*J*alpha'^2",
    };
    await storeRawContent(derivation.id, stored);
    const client = track(connectClient(running.url, derivation.id, await tokenFor(kestrel.members.viewer.id, derivation.id)));
    await waitFor(() => client.provider.synced, "sync");
    const expected = parseStoredDocument(stored, { title: "Hoist drum" });
    expect(expected.ok).toBe(true);
    expect(yDocToDocument(client.doc)).toEqual(expected.ok ? expected.document : null);
    expect(await getSharedDocUpdatesById({ derivationId: derivation.id })).toHaveLength(1);
  });

  it("stores an edit before relaying it, acknowledges it, and keeps the JSON copy current", async () => {
    const derivation = await newDerivation();
    const kinetic = kineticId(derivation.content as DerivationDocument);
    const a = track(connectClient(running.url, derivation.id, await tokenFor(kestrel.members.analyst.id, derivation.id)));
    const b = track(connectClient(running.url, derivation.id, await tokenFor(kestrel.members.lead.id, derivation.id)));
    await waitFor(() => a.provider.synced && b.provider.synced, "sync");
    fieldText(a.doc, kinetic, "expr")!.insert(0, "1/2*J*alpha'^2");
    await waitFor(() => a.allStored(), "the stored acknowledgement");
    // acknowledged means stored: the log holds the edit
    expect(fieldText(await storedDoc(derivation.id), kinetic, "expr")?.toString()).toBe("1/2*J*alpha'^2");
    await waitFor(() => fieldText(b.doc, kinetic, "expr")?.toString() === "1/2*J*alpha'^2", "the edit at the other client");
    await waitFor(async () => {
      const row = await getDerivationById({ id: derivation.id });
      return isDeepStrictEqual(row?.content, yDocToDocument(a.doc));
    }, "the JSON copy");
    const row = await getDerivationById({ id: derivation.id });
    expect(row?.updatedById).toBe(kestrel.members.analyst.id);
  });

  it("drops a viewer's and a reviewer's updates (never applied, stored or relayed) but relays their presence", async () => {
    const derivation = await newDerivation();
    const kinetic = kineticId(derivation.content as DerivationDocument);
    const analyst = track(connectClient(running.url, derivation.id, await tokenFor(kestrel.members.analyst.id, derivation.id)));
    const viewer = track(connectClient(running.url, derivation.id, await tokenFor(kestrel.members.viewer.id, derivation.id)));
    const reviewer = track(connectClient(running.url, derivation.id, await tokenFor(kestrel.members.reviewer.id, derivation.id)));
    await waitFor(() => analyst.provider.synced && viewer.provider.synced && reviewer.provider.synced, "sync");
    const rowsBefore = (await getSharedDocUpdatesById({ derivationId: derivation.id })).length;
    viewer.provider.awareness.setLocalStateField("user", { name: "Viewer" });
    fieldText(viewer.doc, kinetic, "expr")!.insert(0, "VIEWER");
    fieldText(reviewer.doc, kinetic, "expr")!.insert(0, "REVIEWER");
    // the analyst's later edit arrives, so the earlier ones had their chance
    fieldText(analyst.doc, kinetic, "expr")!.insert(0, "m*v^2");
    await waitFor(() => analyst.allStored(), "the analyst's acknowledgement");
    await waitFor(() => fieldText(viewer.doc, kinetic, "expr")!.toString().includes("m*v^2"), "the analyst's edit at the viewer");
    await waitFor(() => Array.from(analyst.provider.awareness.getStates().values()).some((state) => state.user?.name === "Viewer"), "the viewer's presence");
    expect(fieldText(analyst.doc, kinetic, "expr")!.toString()).toBe("m*v^2");
    expect(fieldText(await storedDoc(derivation.id), kinetic, "expr")!.toString()).toBe("m*v^2");
    expect(fieldText(running.server.rooms.get(derivation.id)!.doc, kinetic, "expr")!.toString()).toBe("m*v^2");
    expect(await getSharedDocUpdatesById({ derivationId: derivation.id })).toHaveLength(rowsBefore + 1);
    expect(viewer.allStored()).toBe(false);
  });

  it("brings a restored revision to connected clients", async () => {
    const derivation = await newDerivation();
    const kinetic = kineticId(derivation.content as DerivationDocument);
    const a = track(connectClient(running.url, derivation.id, await tokenFor(kestrel.members.analyst.id, derivation.id)));
    await waitFor(() => a.provider.synced, "sync");
    fieldText(a.doc, kinetic, "expr")!.insert(0, "first version");
    await waitFor(
      async () =>
        ((await getDerivationById({ id: derivation.id }))?.content as DerivationDocument).cells.some((c) => "expr" in c && c.expr === "first version"),
      "JSON copy",
    );
    signInAs(kestrel.members.analyst);
    const checkpoint = await checkpointRoute.POST(
      jsonRequest(`/api/derivations/${derivation.id}/revisions`, "POST", { name: "first" }),
      params({ id: derivation.id }),
    );
    expect(checkpoint.status).toBe(201);
    const { revision } = await checkpoint.json();
    fieldText(a.doc, kinetic, "expr")!.delete(0, 5);
    fieldText(a.doc, kinetic, "expr")!.insert(0, "second");
    await waitFor(() => a.allStored(), "ack");
    const restored = await restoreRoute.POST(jsonRequest("/x", "POST"), params({ id: derivation.id, revisionId: revision.id }));
    expect(restored.status).toBe(200);
    await waitFor(() => fieldText(a.doc, kinetic, "expr")!.toString() === "first version", "the restored text at the client");
    // the JSON copy follows (a copy of the pre-restore state written in the same moment is overwritten again)
    await waitFor(async () => {
      const [row] = await db.select().from(derivations).where(eq(derivations.id, derivation.id));
      return (row!.content as DerivationDocument).cells.some((c) => c.id === kinetic && "expr" in c && c.expr === "first version");
    }, "the restored JSON copy");
    expect(running.server.rooms.get(derivation.id) && fieldText(running.server.rooms.get(derivation.id)!.doc, kinetic, "expr")!.toString()).toBe(
      "first version",
    );
  });

  it("writes, compacts and unloads a document after its last connection leaves", async () => {
    const derivation = await newDerivation();
    const kinetic = kineticId(derivation.content as DerivationDocument);
    const a = track(connectClient(running.url, derivation.id, await tokenFor(kestrel.members.analyst.id, derivation.id)));
    await waitFor(() => a.provider.synced, "sync");
    for (const text of ["m", "*", "v", "^2"]) fieldText(a.doc, kinetic, "expr")!.insert(fieldText(a.doc, kinetic, "expr")!.length, text);
    await waitFor(() => a.allStored(), "ack");
    const expected = yDocToDocument(a.doc);
    a.destroy();
    clients.splice(clients.indexOf(a), 1);
    await waitFor(() => !running.server.rooms.has(derivation.id), "the unload");
    const rows = await getSharedDocUpdatesById({ derivationId: derivation.id });
    expect(rows).toHaveLength(1);
    expect(yDocToDocument(await storedDoc(derivation.id))).toEqual(expected);
    expect((await getDerivationById({ id: derivation.id }))?.content).toEqual(expected);
  });
});

describe("notifications", () => {
  it("resyncs loaded documents after the LISTEN connection was lost, so a write made meanwhile arrives", async () => {
    const derivation = await newDerivation();
    const a = track(connectClient(running.url, derivation.id, await tokenFor(kestrel.members.analyst.id, derivation.id)));
    await waitFor(() => a.provider.synced, "sync");
    const listeners = await db.execute<{ pid: number }>(
      // The listening connection names its instance.
      sql`select pid from pg_stat_activity where datname = current_database() and application_name = ${`holonomy-collab-${running.server.instanceId}`}`,
    );
    expect(listeners.rows.length).toBeGreaterThan(0);
    for (const { pid } of listeners.rows) await db.execute(sql`select pg_terminate_backend(${pid})`);
    // renamed while nobody listens: the NOTIFY is lost
    signInAs(kestrel.members.lead);
    const renamed = await derivationRouteModule.PATCH(
      jsonRequest(`/api/derivations/${derivation.id}`, "PATCH", { title: "Hoist brake drum, rev B" }),
      params({ id: derivation.id }),
    );
    expect(renamed.status).toBe(200);
    await waitFor(() => titleText(a.doc)?.toString() === "Hoist brake drum, rev B", "the renamed title after the listener reconnected");
  });
});

describe("limits", () => {
  it("closes only the connection that sent a malformed, an oversized or too many messages", async () => {
    const small = await startCollabServer({ maxMessageBytes: 4096, maxMessagesPerSecond: 5 });
    try {
      const derivation = await newDerivation();
      const kinetic = kineticId(derivation.content as DerivationDocument);
      const token = await tokenFor(kestrel.members.analyst.id, derivation.id);
      const good = track(connectClient(small.url, derivation.id, token));
      await waitFor(() => good.provider.synced, "sync");

      const malformed = rawSocket(`${small.url}/${derivation.id}?token=${token}`);
      await new Promise((resolve) => malformed.socket.once("open", resolve));
      malformed.socket.send(new Uint8Array([0, 2, 200, 1, 2]));
      expect((await malformed.closed).code).toBe(4400);

      const large = rawSocket(`${small.url}/${derivation.id}?token=${token}`);
      await new Promise((resolve) => large.socket.once("open", resolve));
      const encoder = encoding.createEncoder();
      encoding.writeVarUint(encoder, 1);
      encoding.writeVarUint8Array(encoder, new Uint8Array(5000));
      large.socket.send(encoding.toUint8Array(encoder));
      expect((await large.closed).code).toBe(4413);

      const chatty = rawSocket(`${small.url}/${derivation.id}?token=${token}`);
      await new Promise((resolve) => chatty.socket.once("open", resolve));
      const queryAwareness = new Uint8Array([3]);
      for (let i = 0; i < 40; i += 1) chatty.socket.send(queryAwareness);
      expect((await chatty.closed).code).toBe(4429);

      // the well-behaved connection still edits
      fieldText(good.doc, kinetic, "expr")!.insert(0, "still here");
      await waitFor(() => good.allStored(), "ack on the remaining connection");
      expect(good.closed).toBeNull();
    } finally {
      await small.server.close();
    }
  });
});

describe("a locked derivation", () => {
  it("gives read-only connections and refuses stored updates", async () => {
    const derivation = await newDerivation();
    const kinetic = kineticId(derivation.content as DerivationDocument);
    await db.update(derivations).set({ lockedAt: new Date(), status: "approved" }).where(eq(derivations.id, derivation.id));
    signInAs(kestrel.members.lead);
    const answer = await (await tokenRoute.POST(jsonRequest("/x", "POST"), params({ id: derivation.id }))).json();
    expect(answer.readOnly).toBe(true);
    const lead = track(connectClient(running.url, derivation.id, answer.token));
    await waitFor(() => lead.provider.synced, "sync");
    fieldText(lead.doc, kinetic, "expr")!.insert(0, "after approval");
    await new Promise((resolve) => setTimeout(resolve, 300));
    expect(fieldText(await storedDoc(derivation.id), kinetic, "expr")!.toString()).toBe("");
    expect(lead.allStored()).toBe(false);
    // the server holds exactly what is stored
    expect(Y.encodeStateVector(running.server.rooms.get(derivation.id)!.doc)).toEqual(Y.encodeStateVector(await storedDoc(derivation.id)));
  });
});
