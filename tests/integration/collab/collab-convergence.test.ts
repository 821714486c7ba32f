// Seeded random convergence (the Yjs test style, over the real server): three
// y-websocket clients edit at random, some while disconnected, reconnect at
// random; at the end every copy, the server's and the stored one are identical.
// The seed is printed; rerun with COLLAB_TEST_SEED=<seed> to repeat a run.
import { isDeepStrictEqual } from "node:util";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import * as Y from "yjs";
import { closeDatabase } from "@/db/client";
import { createDerivation, getDerivationById } from "@/db/queries/derivations";
import { DocumentError, blankDocument, type DerivationDocument } from "@/lib/notebook/document";
import { deleteSharedRow, fieldText, insertSharedRow, yDocToDocument, yDocToJson } from "@/lib/notebook/document/shared-doc";
import { makeTeam, resetDatabase, type TeamFixture } from "../support/fixtures";
import { connectClient, startCollabServer, storedDoc, tokenFor, waitFor, type RunningServer, type TestClient } from "./support";

let kestrel: TeamFixture;
let running: RunningServer;

/** mulberry32: a small seeded generator, enough to repeat a run. */
function generator(seed: number): () => number {
  let state = seed >>> 0;
  return () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

beforeAll(async () => {
  await resetDatabase();
  kestrel = await makeTeam("Kestrel test rig");
  running = await startCollabServer();
});

afterAll(async () => {
  await running.server.close();
  await closeDatabase();
});

describe("random concurrent editing", () => {
  it("converges: every client, the server and the stored state hold the same document", { timeout: 120_000 }, async () => {
    const seed = Number(process.env.COLLAB_TEST_SEED ?? Math.floor(Math.random() * 2 ** 31));
    console.log(`[collab convergence] seed ${seed}`);
    const random = generator(seed);
    const pick = <T>(list: readonly T[]): T => list[Math.floor(random() * list.length)]!;

    const content = blankDocument("Seat rig convergence");
    const derivation = await createDerivation({ teamId: kestrel.team.id, title: content.title, ownerId: kestrel.members.analyst.id, content });
    const cellOf = (kind: string) => (derivation.content as DerivationDocument).cells.find((cell) => cell.kind === kind)!.id;
    const textCells = [cellOf("kinetic"), cellOf("potential")];
    const coordinates = cellOf("coordinates");
    const people = [kestrel.members.analyst, kestrel.members.lead, kestrel.members.analyst];
    const clients: TestClient[] = [];
    for (const person of people) clients.push(connectClient(running.url, derivation.id, await tokenFor(person.id, derivation.id)));
    await waitFor(() => clients.every((client) => client.provider.synced), "first sync");

    let rowCounter = 0;
    let edits = 0;
    for (let step = 0; step < 240; step += 1) {
      const index = Math.floor(random() * clients.length);
      const client = clients[index]!;
      const roll = random();
      if (roll < 0.06 && client.provider.wsconnected) client.provider.disconnect();
      else if (roll < 0.2 && !client.provider.shouldConnect) client.provider.connect();
      else if (roll < 0.6) {
        const text = fieldText(client.doc, pick(textCells), "expr")!;
        text.insert(Math.floor(random() * (text.length + 1)), pick(["m", "*", "x'", "^2", " + ", "1/2", "(", ")", "g*l"]));
        edits += 1;
      } else if (roll < 0.75) {
        const text = fieldText(client.doc, pick(textCells), "expr")!;
        if (text.length > 0) {
          const at = Math.floor(random() * text.length);
          text.delete(at, Math.min(text.length - at, 1 + Math.floor(random() * 4)));
          edits += 1;
        }
      } else {
        try {
          const rows = yDocToDocument(client.doc).cells.find((cell) => cell.id === coordinates);
          const rowIds = rows && "rows" in rows ? rows.rows.map((row) => row.id) : [];
          if (rowIds.length > 3 && random() < 0.4) deleteSharedRow(client.doc, coordinates, pick(rowIds));
          else if (rowIds.length > 0 && random() < 0.5) {
            const name = fieldText(client.doc, coordinates, ["rows", pick(rowIds), "name"]);
            if (name && name.length < 30) name.insert(name.length, pick(["q", "1", "_", "theta"]));
          } else insertSharedRow(client.doc, coordinates, { id: `c${index}r${(rowCounter += 1)}`, name: "", unit: "m", description: "" });
          edits += 1;
        } catch (error) {
          if (!(error instanceof DocumentError)) throw error;
        }
      }
      if (random() < 0.3) await new Promise((resolve) => setTimeout(resolve, Math.floor(random() * 15)));
    }
    for (const client of clients) if (!client.provider.shouldConnect) client.provider.connect();
    const server = () => running.server.rooms.get(derivation.id)!.doc;
    await waitFor(
      () =>
        clients.every(
          (client) => client.provider.synced && client.allStored() && isDeepStrictEqual(Y.encodeStateVector(client.doc), Y.encodeStateVector(server())),
        ),
      "every client acknowledged and in step with the server",
      30_000,
    );
    const expected = yDocToJson(server());
    for (const client of clients) expect(yDocToJson(client.doc)).toEqual(expected);
    expect(yDocToJson(await storedDoc(derivation.id))).toEqual(expected);
    const document = yDocToDocument(server());
    await waitFor(async () => isDeepStrictEqual((await getDerivationById({ id: derivation.id }))?.content, document), "the JSON copy");
    expect(edits).toBeGreaterThan(100);
    for (const client of clients) client.destroy();
  });
});
