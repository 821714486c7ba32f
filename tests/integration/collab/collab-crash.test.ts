// Killing the collaboration server (SIGKILL) while clients type, then starting
// it again, loses no update the server had acknowledged as stored.
import { spawn, type ChildProcess } from "node:child_process";
import path from "node:path";
import { isDeepStrictEqual } from "node:util";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import * as Y from "yjs";
import { closeDatabase } from "@/db/client";
import { createDerivation, getDerivationById } from "@/db/queries/derivations";
import { blankDocument, type DerivationDocument } from "@/lib/notebook/document";
import { fieldText, yDocToDocument } from "@/lib/notebook/document/shared-doc";
import { makeTeam, resetDatabase, type TeamFixture } from "../support/fixtures";
import { connectClient, storedDoc, tokenFor, waitFor, type TestClient } from "./support";

const ROOT = path.resolve(import.meta.dirname, "../../..");
const port = Number(process.env.HOLONOMY_TEST_COLLAB_PORT ?? 3101);
let kestrel: TeamFixture;
let child: ChildProcess | null = null;

async function startServerProcess(): Promise<ChildProcess> {
  const started = spawn(process.execPath, ["--conditions=react-server", "--import", "tsx", "server/collab.ts"], {
    cwd: ROOT,
    env: { ...process.env, COLLAB_PORT: String(port), COLLAB_UNLOAD_DELAY_MS: "200", COLLAB_JSON_COPY_DELAY_MS: "100" },
    stdio: ["ignore", "ignore", "inherit"],
  });
  await waitFor(
    async () => {
      if (started.exitCode !== null) throw new Error(`the collaboration server exited with ${started.exitCode}`);
      return fetch(`http://127.0.0.1:${port}/collab/health`).then(
        (response) => response.ok,
        () => false,
      );
    },
    "the collaboration server process",
    60_000,
  );
  return started;
}

beforeAll(async () => {
  await resetDatabase();
  kestrel = await makeTeam("Kestrel crane bench");
});

afterAll(async () => {
  if (child && child.exitCode === null) child.kill("SIGTERM");
  await closeDatabase();
});

describe("a crash of the collaboration server", () => {
  it("loses no acknowledged update", { timeout: 180_000 }, async () => {
    const content = blankDocument("Trolley drive crash test");
    const derivation = await createDerivation({ teamId: kestrel.team.id, title: content.title, ownerId: kestrel.members.analyst.id, content });
    const kinetic = (derivation.content as DerivationDocument).cells.find((cell) => cell.kind === "kinetic")!.id;
    child = await startServerProcess();
    const url = `ws://127.0.0.1:${port}/collab`;
    const clients: TestClient[] = [];
    for (const person of [kestrel.members.analyst, kestrel.members.lead])
      clients.push(connectClient(url, derivation.id, await tokenFor(person.id, derivation.id)));
    await waitFor(() => clients.every((client) => client.provider.synced), "sync");

    // Each marker is typed by one client; it counts as acknowledged once the server's
    // stored state vector covers the client's clock right after typing it.
    const typed: { marker: string; client: TestClient; clock: number }[] = [];
    const acknowledged = new Set<string>();
    let counter = 0;
    const typeOne = (client: TestClient) => {
      const text = fieldText(client.doc, kinetic, "expr")!;
      const marker = `<${(counter += 1)}>`;
      text.insert(text.length, marker);
      typed.push({ marker, client, clock: Y.decodeStateVector(Y.encodeStateVector(client.doc)).get(client.doc.clientID) ?? 0 });
    };
    const noteAcks = () => {
      for (const entry of typed) if ((entry.client.stored.get(entry.client.doc.clientID) ?? 0) >= entry.clock) acknowledged.add(entry.marker);
    };
    const typeFor = async (ms: number) => {
      const end = Date.now() + ms;
      while (Date.now() < end) {
        for (const client of clients) typeOne(client);
        noteAcks();
        await new Promise((resolve) => setTimeout(resolve, 15));
      }
    };

    await typeFor(1500);
    child.kill("SIGKILL");
    const ackedBeforeKill = new Set(acknowledged);
    await typeFor(300);
    noteAcks();
    child = await startServerProcess();
    await waitFor(() => clients.every((client) => client.provider.wsconnected && client.provider.synced), "reconnect", 30_000);
    await typeFor(800);
    await waitFor(() => clients.every((client) => client.allStored()), "every edit stored", 30_000);
    noteAcks();

    const stored = fieldText(await storedDoc(derivation.id), kinetic, "expr")!.toString();
    const lost = Array.from(acknowledged).filter((marker) => !stored.includes(marker));
    console.log(
      `[collab crash] typed ${typed.length}, acknowledged before the kill ${ackedBeforeKill.size}, acknowledged in all ${acknowledged.size}, lost ${lost.length}`,
    );
    expect(ackedBeforeKill.size).toBeGreaterThan(20);
    expect(lost).toEqual([]);
    // after the restart every typed marker was stored, also those typed while the server was down
    expect(acknowledged.size).toBe(typed.length);
    // the JSON copy catches up with everything stored, also what only the first process had stored
    await waitFor(
      async () => isDeepStrictEqual((await getDerivationById({ id: derivation.id }))?.content, yDocToDocument(await storedDoc(derivation.id))),
      "the JSON copy",
    );
    for (const client of clients) client.destroy();
  });
});
