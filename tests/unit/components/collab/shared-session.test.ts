import { afterEach, describe, expect, it } from "vitest";
import * as Y from "yjs";
import { observeDocument } from "@/components/collab/document-state";
import { refusalText, SharedSession, type CollabTicket } from "@/components/collab/shared-session";
import { AppError } from "@/lib/errors";
import { modelToDocument, type DerivationDocument } from "@/lib/notebook/document";
import { applySharedOperation, fieldText, yDocToDocument } from "@/lib/notebook/document/shared-doc";
import { templateModel } from "@/lib/notebook/templates";
import { MemoryCollabServer } from "./memory-server";

const sessions: SharedSession[] = [];
afterEach(() => {
  for (const session of sessions.splice(0)) session.destroy();
});

// One document for every test (ids are drawn at random on creation).
const PENDULUM: DerivationDocument = modelToDocument(templateModel("single-pendulum"));
const pendulum = () => structuredClone(PENDULUM);

function open(server: MemoryCollabServer, user: { id: string; name: string; readOnly?: boolean }, fetchTicket?: () => Promise<CollabTicket>) {
  const session = new SharedSession({
    derivationId: "d1",
    fetchTicket: fetchTicket ?? (async () => server.ticket(user)),
    createProvider: server.provider,
    retryDelaysMs: [10],
  });
  sessions.push(session);
  session.start();
  return session;
}

async function until(check: () => boolean, what: string, timeoutMs = 2_000): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  while (!check()) {
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${what}`);
    await new Promise((resolve) => setTimeout(resolve, 5));
  }
}

const live = (session: SharedSession) => session.getSnapshot().connection.state === "live";

function kineticText(session: SharedSession): Y.Text {
  const cell = yDocToDocument(session.ydoc).cells.find((c) => c.kind === "kinetic")!;
  return fieldText(session.ydoc, cell.id, "expr")!;
}

describe("refusalText", () => {
  it("shows a specific server reason alone for no access or a deleted derivation, and adds advice to a token refusal", () => {
    const demoted = "Your role in this team changed and no longer lets you edit; reload to read it.";
    expect(refusalText(4403, demoted)).toBe(demoted);
    expect(refusalText(4404, "This derivation was deleted")).toBe("This derivation was deleted.");
    expect(refusalText(4401, "The connection token has expired.")).toBe(
      "The connection token has expired — your access to this document could not be confirmed; reload the page or sign in again.",
    );
    expect(refusalText(4403, "")).toBe("You no longer have access to this derivation.");
  });
});

describe("SharedSession", () => {
  it("brings the server's document to two clients and merges their concurrent typing in one field", async () => {
    const server = new MemoryCollabServer(pendulum());
    const ana = open(server, { id: "u1", name: "Ana Analyst" });
    const bo = open(server, { id: "u2", name: "Bo Lead" });
    await until(() => live(ana) && live(bo), "both connected");
    expect(yDocToDocument(ana.ydoc)).toEqual(pendulum());

    const anaText = kineticText(ana);
    const boText = kineticText(bo);
    const before = anaText.toString();
    // Both type at once, at the start and at the end of the same expression.
    ana.ydoc.transact(() => anaText.insert(0, "2*("), ana.origin);
    bo.ydoc.transact(() => boText.insert(boText.length, ")/2"), bo.origin);
    await until(() => anaText.toString() === boText.toString() && anaText.toString().length === before.length + 6, "convergence");
    expect(anaText.toString()).toBe(`2*(${before})/2`);
    expect(yDocToDocument(server.doc)).toEqual(yDocToDocument(ana.ydoc));
  });

  it("counts an edit as stored only when the server's state vector covers this client's clock", async () => {
    const server = new MemoryCollabServer(pendulum());
    const ana = open(server, { id: "u1", name: "Ana Analyst" });
    await until(() => live(ana), "connected");
    server.holdAcks = true;
    ana.ydoc.transact(() => kineticText(ana).insert(0, "1*"), ana.origin);
    ana.ydoc.transact(() => kineticText(ana).insert(0, "1*"), ana.origin);
    expect(ana.getSnapshot().pending).toBe(2);
    const stored = ana.whenStored(1_000);
    server.releaseAcks();
    await expect(stored).resolves.toBe(true);
    expect(ana.getSnapshot().pending).toBe(0);
  });

  it("keeps edits made while offline, says how many are unstored, and merges them on reconnect", async () => {
    const server = new MemoryCollabServer(pendulum());
    const ana = open(server, { id: "u1", name: "Ana Analyst" });
    const bo = open(server, { id: "u2", name: "Bo Lead" });
    await until(() => live(ana) && live(bo), "both connected");
    const provider = [...server.connections].find((connection) => connection.awareness.doc === ana.ydoc)!;
    provider.disconnect();
    expect(ana.getSnapshot().connection.state).toBe("offline");
    const kinetic = yDocToDocument(ana.ydoc).cells.find((c) => c.kind === "kinetic")!;
    applySharedOperation(ana.ydoc, { type: "setCollapsed", cellId: kinetic.id, collapsed: true }, ana.origin);
    kineticText(bo).insert(0, "(");
    expect(ana.getSnapshot().pending).toBe(1);
    await expect(ana.whenStored(20)).resolves.toBe(false);

    provider.connect();
    await until(() => ana.getSnapshot().pending === 0, "stored after reconnect");
    const merged = yDocToDocument(bo.ydoc);
    expect(merged.cells.find((c) => c.id === kinetic.id)).toMatchObject({ collapsed: true });
    expect(kineticText(ana).toString().startsWith("(")).toBe(true);
    expect(yDocToDocument(ana.ydoc)).toEqual(merged);
  });

  it("relays nothing a read-only client types; its presence still shows", async () => {
    const server = new MemoryCollabServer(pendulum());
    const viewer = open(server, { id: "u3", name: "Vi Viewer", readOnly: true });
    const ana = open(server, { id: "u1", name: "Ana Analyst" });
    await until(() => live(viewer) && live(ana), "both connected");
    expect(viewer.getSnapshot().readOnly).toBe(true);
    kineticText(viewer).insert(0, "zz");
    await new Promise((resolve) => setTimeout(resolve, 20));
    expect(server.dropped).toBe(1);
    expect(kineticText(ana).toString()).not.toContain("zz");
    expect(yDocToDocument(server.doc)).toEqual(pendulum());
    await until(() => ana.getSnapshot().peers.length === 2, "viewer's presence");
    expect(ana.getSnapshot().peers.map((peer) => [peer.name, peer.self])).toEqual([
      ["Ana Analyst", true],
      ["Vi Viewer", false],
    ]);
  });

  it("shows a refusal and stops: no ticket for another team, or a 44xx close with the server's reason", async () => {
    const server = new MemoryCollabServer(pendulum());
    const outsider = open(server, { id: "u9", name: "Out Sider" }, async () => {
      throw new AppError("not_found:derivation", "Derivation not found.");
    });
    await until(() => outsider.getSnapshot().connection.state === "refused", "refusal");
    expect(outsider.getSnapshot().connection).toMatchObject({ state: "refused", code: 4404, reason: expect.stringContaining("Derivation not found") });

    let presented = 0;
    server.refuse = () => {
      presented += 1;
      return { code: 4401, reason: "The token is invalid or expired." };
    };
    const forged = open(server, { id: "u1", name: "Ana Analyst" });
    await until(() => forged.getSnapshot().connection.state === "refused", "close 4401");
    // One fresh ticket is tried for an expired one, then the page says why and stops.
    expect(presented).toBe(2);
    expect(forged.getSnapshot().connection).toEqual({ state: "refused", code: 4401, reason: refusalText(4401, "The token is invalid or expired.") });
    expect(forged.getSnapshot().synced).toBe(false);
  });

  it("undoes this client's edits across cells and leaves everyone else's", async () => {
    const server = new MemoryCollabServer(pendulum());
    const ana = open(server, { id: "u1", name: "Ana Analyst" });
    const bo = open(server, { id: "u2", name: "Bo Lead" });
    await until(() => live(ana) && live(bo), "both connected");
    const doc = yDocToDocument(ana.ydoc);
    const potential = doc.cells.find((c) => c.kind === "potential")!;
    const kineticBefore = kineticText(ana).toString();
    ana.ydoc.transact(() => kineticText(ana).insert(0, "A+"), ana.origin);
    ana.undoManager.stopCapturing();
    applySharedOperation(ana.ydoc, { type: "deleteCell", cellId: potential.id }, ana.origin);
    bo.ydoc.transact(() => kineticText(bo).insert(kineticText(bo).length, "+B"), bo.origin);
    await until(() => kineticText(ana).toString().endsWith("+B"), "Bo's edit");

    ana.undoManager.undo();
    expect(yDocToDocument(ana.ydoc).cells.some((c) => c.id === potential.id)).toBe(true);
    ana.undoManager.undo();
    expect(kineticText(ana).toString()).toBe(`${kineticBefore}+B`);
    await until(() => kineticText(bo).toString() === `${kineticBefore}+B`, "undo reaches Bo");
  });
});

describe("observeDocument", () => {
  it("reports the document once per frame after any change, and a problem instead of a broken document", async () => {
    const ydoc = new Y.Doc();
    const seen: unknown[] = [];
    const stop = observeDocument(ydoc, (state) => seen.push(state));
    await new Promise((resolve) => setTimeout(resolve, 40));
    // Empty until the server's copy arrives: nothing to report.
    expect(seen).toEqual([]);
    const server = new MemoryCollabServer(pendulum());
    Y.applyUpdate(ydoc, Y.encodeStateAsUpdate(server.doc));
    const cell = yDocToDocument(ydoc).cells.find((c) => c.kind === "kinetic")!;
    for (let i = 0; i < 5; i += 1) fieldText(ydoc, cell.id, "expr")!.insert(0, "1*");
    await until(() => seen.length >= 1, "one report");
    await new Promise((resolve) => setTimeout(resolve, 40));
    expect(seen).toHaveLength(1);
    expect((seen[0] as { document: DerivationDocument }).document.cells.find((c) => c.id === cell.id)).toMatchObject({
      expr: expect.stringMatching(/^(1\*){5}/),
    });

    ydoc.getArray<Y.Map<unknown>>("cells").get(0).set("kind", "teapot");
    await until(() => seen.length === 2, "a problem");
    expect(seen[1]).toEqual({ problem: expect.stringContaining("cells[0]") });
    stop();
  });
});
