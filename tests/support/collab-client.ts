// A collaboration client in Node, for tests that drive the collaboration server as
// a separate process: y-websocket's provider (as the browser's SharedSession uses
// it) recording the server's "stored" acknowledgements (message type 100, the state
// vector of what is stored) and every connection it made. It imports nothing of
// the server, so browser-suite specs can use it too.
import * as decoding from "lib0/decoding";
import { WebsocketProvider } from "y-websocket";
import WebSocket from "ws";
import * as Y from "yjs";

/** The server's acknowledgement of stored updates (server/collab/protocol.ts, MESSAGE_STORED). */
export const MESSAGE_STORED = 100;

export interface CollabClient {
  doc: Y.Doc;
  provider: WebsocketProvider;
  /** The latest "stored" state vector from the server. */
  stored: Map<number, number>;
  /** How many times the provider finished a sync (the first connection and every reconnect). */
  syncs: number;
  /** Close codes the provider saw, in order. */
  closes: number[];
  /** This client's own clock: an edit made now is covered once `storedClock()` reaches it. */
  ownClock(): number;
  /** Up to which clock of this client the server said it stored updates. */
  storedClock(): number;
  /** Uses a fresh token from the next connection on (the provider reads `params` when it connects). */
  setToken(token: string): void;
  destroy(): void;
}

export function connectCollabClient(url: string, derivationId: string, token: string, { maxBackoffMs = 500 } = {}): CollabClient {
  const doc = new Y.Doc();
  const provider = new WebsocketProvider(url, derivationId, doc, {
    params: { token },
    WebSocketPolyfill: WebSocket as unknown as typeof globalThis.WebSocket,
    disableBc: true,
    maxBackoffTime: maxBackoffMs,
  });
  const client: CollabClient = {
    doc,
    provider,
    stored: new Map(),
    syncs: 0,
    closes: [],
    ownClock: () => Y.decodeStateVector(Y.encodeStateVector(doc)).get(doc.clientID) ?? 0,
    storedClock: () => client.stored.get(doc.clientID) ?? 0,
    setToken(next) {
      provider.params = { token: next };
    },
    destroy() {
      provider.destroy();
      doc.destroy();
    },
  };
  provider.messageHandlers[MESSAGE_STORED] = (_encoder, decoder) => {
    client.stored = Y.decodeStateVector(decoding.readVarUint8Array(decoder));
  };
  provider.on("sync", (synced: boolean) => {
    if (synced) client.syncs += 1;
  });
  provider.on("connection-close", (event: { code: number } | null) => {
    client.closes.push(event?.code ?? 0);
  });
  return client;
}
