import { afterAll, beforeAll, describe, expect, it } from "vitest";
import * as Y from "yjs";
import { closeDatabase } from "@/db/client";
import { appendSharedDocUpdate, compactSharedDocById, getSharedDocUpdatesById, getSharedDocumentById, loadSharedDocById } from "@/db/queries/collab";
import { createDerivation } from "@/db/queries/derivations";
import { blankDocument } from "@/lib/notebook/document";
import { fieldText, yDocToDocument } from "@/lib/notebook/document/shared-doc";
import { makeTeam, resetDatabase, type TeamFixture } from "../support/fixtures";
import { storedDoc } from "./support";

let kestrel: TeamFixture;

beforeAll(async () => {
  await resetDatabase();
  kestrel = await makeTeam("Kestrel gimbal bench");
});

afterAll(async () => {
  await closeDatabase();
});

async function newDerivation(title = "Gimbal tilt axis") {
  return createDerivation({ teamId: kestrel.team.id, title, ownerId: kestrel.members.analyst.id, content: blankDocument(title) });
}

describe("the shared document's update log", () => {
  it("seeds a derivation once when several loaders race", async () => {
    const derivation = await newDerivation();
    const loads = await Promise.all(Array.from({ length: 6 }, () => loadSharedDocById({ derivationId: derivation.id })));
    const rows = await getSharedDocUpdatesById({ derivationId: derivation.id });
    expect(rows).toHaveLength(1);
    for (const load of loads) expect(load).toEqual({ status: "loaded", updates: rows });
    expect(yDocToDocument(await storedDoc(derivation.id))).toEqual(derivation.content);
  });

  it("reads the current shared document, or null before the first load", async () => {
    const derivation = await newDerivation();
    expect(await getSharedDocumentById({ derivationId: derivation.id })).toBeNull();
    await loadSharedDocById({ derivationId: derivation.id });
    const doc = await storedDoc(derivation.id);
    const kinetic = yDocToDocument(doc).cells.find((cell) => cell.kind === "kinetic")!.id;
    const before = Y.encodeStateVector(doc);
    fieldText(doc, kinetic, "expr")!.insert(0, "1/2*J*theta'^2");
    await appendSharedDocUpdate({ derivationId: derivation.id, update: Y.encodeStateAsUpdate(doc, before) });
    expect(await getSharedDocumentById({ derivationId: derivation.id })).toEqual(yDocToDocument(doc));
  });

  it("loses no update when compactions run while three writers append", async () => {
    const derivation = await newDerivation();
    const [seed] =
      (await loadSharedDocById({ derivationId: derivation.id })).status === "loaded" ? await getSharedDocUpdatesById({ derivationId: derivation.id }) : [];
    const perWriter = 60;
    const writers = Array.from({ length: 3 }, async (_, writer) => {
      const doc = new Y.Doc();
      Y.applyUpdate(doc, seed!.update);
      const text = doc.getText("log");
      for (let i = 0; i < perWriter; i += 1) {
        const before = Y.encodeStateVector(doc);
        text.insert(text.length, `<${writer}:${i}>`);
        const result = await appendSharedDocUpdate({ derivationId: derivation.id, update: Y.encodeStateAsUpdate(doc, before) });
        expect(result.status).toBe("stored");
      }
    });
    let compactions = 0;
    let folded = 0;
    let writing = true;
    const compactor = (async () => {
      while (writing) {
        const results = await Promise.all([compactSharedDocById({ derivationId: derivation.id }), compactSharedDocById({ derivationId: derivation.id })]);
        for (const result of results) {
          if (result.folded === 0) continue;
          compactions += 1;
          folded += result.folded;
        }
      }
    })();
    await Promise.all(writers);
    writing = false;
    await compactor;
    await compactSharedDocById({ derivationId: derivation.id });
    expect(compactions).toBeGreaterThan(2);
    const rows = await getSharedDocUpdatesById({ derivationId: derivation.id });
    expect(rows).toHaveLength(1);
    const text = (await storedDoc(derivation.id)).getText("log").toString();
    for (let writer = 0; writer < 3; writer += 1) {
      for (let i = 0; i < perWriter; i += 1) expect(text).toContain(`<${writer}:${i}>`);
    }
    expect(text.length).toBe(
      Array.from({ length: 3 }, (_, w) => Array.from({ length: perWriter }, (_, i) => `<${w}:${i}>`.length).reduce((a, b) => a + b, 0)).reduce(
        (a, b) => a + b,
        0,
      ),
    );
    expect(folded).toBeGreaterThan(0);
  });

  it("drops deleted content when compacting", async () => {
    const derivation = await newDerivation();
    await loadSharedDocById({ derivationId: derivation.id });
    const doc = await storedDoc(derivation.id);
    const note = doc.getText("scratch");
    let before = Y.encodeStateVector(doc);
    note.insert(0, "x".repeat(20_000));
    await appendSharedDocUpdate({ derivationId: derivation.id, update: Y.encodeStateAsUpdate(doc, before) });
    before = Y.encodeStateVector(doc);
    note.delete(0, 20_000);
    await appendSharedDocUpdate({ derivationId: derivation.id, update: Y.encodeStateAsUpdate(doc, before) });
    await compactSharedDocById({ derivationId: derivation.id });
    const [row] = await getSharedDocUpdatesById({ derivationId: derivation.id });
    expect(row!.update.byteLength).toBeLessThan(5000);
    expect((await storedDoc(derivation.id)).getText("scratch").toString()).toBe("");
  });
});
