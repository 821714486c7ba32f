// Helpers for the collaboration server's integration tests: an in-process
// server on an ephemeral port wired to the test database, y-websocket clients
// in Node, raw websocket connections, and waiting for conditions.
import { WebsocketProvider } from "y-websocket";
import * as decoding from "lib0/decoding";
import WebSocket from "ws";
import * as Y from "yjs";
import { getSharedDocUpdatesById } from "@/db/queries/collab";
import { signCollabToken } from "@/lib/collab/token";
import { env } from "@/lib/env";
import { createPostgresCollabServer } from "@/server/collab/postgres";
import type { CollabServer } from "@/server/collab/server";
import { MESSAGE_STORED } from "@/server/collab/protocol";
import type { CollabLimits, Logger } from "@/server/collab/types";

export const quietLogger: Logger = { info: () => undefined, warn: () => undefined, error: (message, error) => console.error(message, error) };

export const testLimits: CollabLimits = {
  maxMessageBytes: 1024 * 1024,
  maxMessagesPerSecond: 1000,
  unloadDelayMs: 200,
  jsonCopyDelayMs: 100,
  jsonCopyMaxWaitMs: 500,
  compactEvery: 1000,
};

export interface RunningServer {
  server: CollabServer;
  url: string;
}

/** A collaboration server in this process on an ephemeral loopback port. */
export async function startCollabServer(limits: Partial<CollabLimits> = {}, logger: Logger = quietLogger): Promise<RunningServer> {
  const server = createPostgresCollabServer({ limits: { ...testLimits, ...limits }, logger });
  const port = await server.listen(0, "127.0.0.1");
  return { server, url: `ws://127.0.0.1:${port}/collab` };
}

export async function tokenFor(userId: string, derivationId: string, now?: Date): Promise<string> {
  return (await signCollabToken({ userId, derivationId }, { secret: env.NEXTAUTH_SECRET, ttlSeconds: 120, now })).token;
}

export async function waitFor(condition: () => boolean | Promise<boolean>, what: string, timeoutMs = 10_000): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  while (!(await condition())) {
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${what}`);
    await new Promise((resolve) => setTimeout(resolve, 20));
  }
}

export interface TestClient {
  doc: Y.Doc;
  provider: WebsocketProvider;
  /** The latest "stored" state vector from the server. */
  stored: Map<number, number>;
  /** Whether the server acknowledged everything this client's own doc holds. */
  allStored(): boolean;
  closed: { code: number; reason: string } | null;
  destroy(): void;
}

/** A y-websocket provider in Node, recording the server's "stored" acknowledgements. */
export function connectClient(url: string, derivationId: string, token: string, doc = new Y.Doc()): TestClient {
  const provider = new WebsocketProvider(url, derivationId, doc, {
    params: { token },
    WebSocketPolyfill: WebSocket as unknown as typeof globalThis.WebSocket,
    disableBc: true,
    maxBackoffTime: 300,
  });
  const client: TestClient = {
    doc,
    provider,
    stored: new Map(),
    closed: null,
    allStored() {
      const own = Y.encodeStateVector(doc);
      const clock = Y.decodeStateVector(own).get(doc.clientID) ?? 0;
      return (client.stored.get(doc.clientID) ?? 0) >= clock;
    },
    destroy() {
      provider.destroy();
      doc.destroy();
    },
  };
  provider.messageHandlers[MESSAGE_STORED] = (_encoder, decoder) => {
    client.stored = Y.decodeStateVector(decoding.readVarUint8Array(decoder));
  };
  provider.on("closed", (event: { code: number; reason: string }) => {
    client.closed = { code: event.code, reason: event.reason };
  });
  return client;
}

/** A raw websocket to the server; resolves with the close code and reason. */
export function rawSocket(url: string): { socket: WebSocket; closed: Promise<{ code: number; reason: string }>; messages: Uint8Array[] } {
  const socket = new WebSocket(url);
  const messages: Uint8Array[] = [];
  socket.binaryType = "nodebuffer";
  socket.on("message", (data: Buffer) => messages.push(new Uint8Array(data)));
  socket.on("error", () => undefined);
  const closed = new Promise<{ code: number; reason: string }>((resolve) => socket.on("close", (code, reason) => resolve({ code, reason: reason.toString() })));
  return { socket, closed, messages };
}

/** The stored shared state of a derivation, folded into one Y.Doc. */
export async function storedDoc(derivationId: string): Promise<Y.Doc> {
  const doc = new Y.Doc();
  for (const row of await getSharedDocUpdatesById({ derivationId })) Y.applyUpdate(doc, row.update);
  return doc;
}
