// One load-generating process of `npm run bench:collab` (started by
// scripts/bench-collab.ts over IPC). It connects 5 y-websocket clients per
// document it is given (spread over the servers it is given), types at the given rate, and measures propagation:
// each keystroke is one Yjs item (clientID, clock); every other client of the
// document notes when the update holding it arrives.
import { performance } from "node:perf_hooks";
import * as decoding from "lib0/decoding";
import WebSocket from "ws";
import { WebsocketProvider } from "y-websocket";
import * as Y from "yjs";
import { contentHash } from "@/lib/history/content-hash";
import { fieldText, yDocToJson } from "@/lib/notebook/document/shared-doc";
import { MESSAGE_STORED } from "@/server/collab/protocol";

export interface WorkerJob {
  /** The collaboration servers: a document's client i connects to urls[i mod length]. */
  urls: string[];
  documents: { derivationId: string; cellId: string; tokens: string[] }[];
  keystrokesPerSecond: number;
  durationMs: number;
  seed: number;
}

export interface WorkerResult {
  latenciesMs: number[];
  /** CPU time this process used (user + system), ms. */
  cpuMs: number;
  /** Keystrokes typed, and how many some other client of the document never received. */
  typed: number;
  unseen: number;
  /** Per document: the content hash of each client's copy, keystrokes per clientID, whether all were acknowledged. */
  documents: { derivationId: string; copies: string[]; typedByClient: Record<string, number>; allStored: boolean }[];
}

// Each provider adds an exit listener.
process.setMaxListeners(0);

interface BenchClient {
  doc: Y.Doc;
  provider: WebsocketProvider;
  stored: Map<number, number>;
  typed: number;
}

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

async function run(job: WorkerJob): Promise<WorkerResult> {
  const random = generator(job.seed);
  const latenciesMs: number[] = [];
  /** Send time and receivers still to hear of each keystroke, by `${client}:${clock}`. */
  const pending = new Map<string, { sentAt: number; waiting: number }>();
  const groups = job.documents.map((document) =>
    document.tokens.map((token, index): BenchClient => {
      const doc = new Y.Doc();
      const provider = new WebsocketProvider(job.urls[index % job.urls.length]!, document.derivationId, doc, {
        params: { token },
        WebSocketPolyfill: WebSocket as unknown as typeof globalThis.WebSocket,
        disableBc: true,
      });
      const client: BenchClient = { doc, provider, stored: new Map(), typed: 0 };
      provider.messageHandlers[MESSAGE_STORED] = (_encoder, decoder) => {
        client.stored = Y.decodeStateVector(decoding.readVarUint8Array(decoder));
      };
      doc.on("update", (update: Uint8Array, origin: unknown) => {
        if (origin !== provider) return;
        const now = performance.now();
        const { from, to } = Y.parseUpdateMeta(update);
        for (const [clientId, end] of to) {
          for (let clock = from.get(clientId) ?? 0; clock < end; clock += 1) {
            const entry = pending.get(`${clientId}:${clock}`);
            if (!entry) continue;
            latenciesMs.push(now - entry.sentAt);
            entry.waiting -= 1;
            if (entry.waiting === 0) pending.delete(`${clientId}:${clock}`);
          }
        }
      });
      return client;
    }),
  );
  const all = groups.flat();
  const deadline = Date.now() + 60_000;
  while (!all.every((client) => client.provider.synced)) {
    if (Date.now() > deadline) throw new Error("clients did not sync within 60 s");
    await new Promise((resolve) => setTimeout(resolve, 50));
  }

  // Typing: each client on its own timer, phases spread so keystrokes do not come in bursts.
  const interval = 1000 / job.keystrokesPerSecond;
  const end = performance.now() + job.durationMs;
  let typed = 0;
  await Promise.all(
    groups.flatMap((group, documentIndex) =>
      group.map(async (client) => {
        await new Promise((resolve) => setTimeout(resolve, random() * interval));
        let next = performance.now();
        while (performance.now() < end) {
          const text = fieldText(client.doc, job.documents[documentIndex]!.cellId, "expr")!;
          const clock = Y.getState(client.doc.store, client.doc.clientID);
          pending.set(`${client.doc.clientID}:${clock}`, { sentAt: performance.now(), waiting: group.length - 1 });
          text.insert(Math.floor(random() * (text.length + 1)), "abcdefghijklmnopqrstuvwxyz"[Math.floor(random() * 26)]!);
          client.typed += 1;
          typed += 1;
          next += interval;
          await new Promise((resolve) => setTimeout(resolve, Math.max(0, next - performance.now())));
        }
      }),
    ),
  );

  // Quiet: wait until every keystroke is acknowledged and every copy in step.
  const settleBy = Date.now() + 30_000;
  const settled = () =>
    groups.every((group) => {
      const vectors = group.map((client) => Buffer.from(Y.encodeStateVector(client.doc)).toString("base64"));
      return vectors.every((vector) => vector === vectors[0]) && group.every((client) => (client.stored.get(client.doc.clientID) ?? 0) >= client.typed);
    });
  while (!settled() && Date.now() < settleBy) await new Promise((resolve) => setTimeout(resolve, 100));

  const cpu = process.cpuUsage();
  const result: WorkerResult = {
    latenciesMs,
    cpuMs: Math.round((cpu.user + cpu.system) / 1000),
    typed,
    unseen: pending.size,
    documents: groups.map((group, index) => ({
      derivationId: job.documents[index]!.derivationId,
      copies: group.map((client) => contentHash(yDocToJson(client.doc))),
      typedByClient: Object.fromEntries(group.map((client) => [String(client.doc.clientID), client.typed])),
      allStored: group.every((client) => (client.stored.get(client.doc.clientID) ?? 0) >= client.typed),
    })),
  };
  for (const client of all) {
    client.provider.destroy();
    client.doc.destroy();
  }
  return result;
}

process.on("message", (job: WorkerJob) => {
  run(job).then(
    (result) => process.send?.({ ok: true, result }, () => process.exit(0)),
    (error: unknown) => process.send?.({ ok: false, error: error instanceof Error ? error.message : String(error) }, () => process.exit(1)),
  );
});
