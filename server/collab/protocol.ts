/**
 * The wire protocol: y-websocket's messages (sync, awareness, query awareness,
 * auth) plus Holonomy's "stored" acknowledgement.
 */
import * as decoding from "lib0/decoding";
import * as encoding from "lib0/encoding";
import * as awarenessProtocol from "y-protocols/awareness";
import * as syncProtocol from "y-protocols/sync";
import * as Y from "yjs";

export const MESSAGE_SYNC = 0;
export const MESSAGE_AWARENESS = 1;
export const MESSAGE_AUTH = 2;
export const MESSAGE_QUERY_AWARENESS = 3;
/**
 * Server → the client whose update was stored: `varUint(100)` then
 * `varUint8Array(Y.encodeStateVector(serverDoc))` after storing and applying.
 * The client may call its edits saved once this covers its own clientID's clock.
 */
export const MESSAGE_STORED = 100;

export const SYNC_STEP_1 = syncProtocol.messageYjsSyncStep1;
export const SYNC_STEP_2 = syncProtocol.messageYjsSyncStep2;
export const SYNC_UPDATE = syncProtocol.messageYjsUpdate;

/** A message the server cannot read: the connection that sent it is closed with 4400. */
export class MalformedMessage extends Error {
  constructor(message: string) {
    super(message);
    this.name = "MalformedMessage";
  }
}

export type IncomingMessage =
  | { type: "sync-step-1"; stateVector: Uint8Array }
  | { type: "update"; update: Uint8Array; step: "step-2" | "update" }
  | { type: "awareness"; update: Uint8Array }
  | { type: "query-awareness" }
  | { type: "auth" };

/**
 * Reads one client message completely (every byte accounted for) without
 * touching any document; the update bytes are checked to decode as a Yjs update.
 */
export function readClientMessage(data: Uint8Array): IncomingMessage {
  try {
    const decoder = decoding.createDecoder(data);
    const type = decoding.readVarUint(decoder);
    let message: IncomingMessage;
    if (type === MESSAGE_SYNC) {
      const step = decoding.readVarUint(decoder);
      const payload = decoding.readVarUint8Array(decoder);
      if (step === SYNC_STEP_1) {
        Y.decodeStateVector(payload);
        message = { type: "sync-step-1", stateVector: payload };
      } else if (step === SYNC_STEP_2 || step === SYNC_UPDATE) {
        Y.decodeUpdate(payload);
        message = { type: "update", update: payload, step: step === SYNC_STEP_2 ? "step-2" : "update" };
      } else throw new MalformedMessage(`unknown sync step ${step}`);
    } else if (type === MESSAGE_AWARENESS) {
      message = { type: "awareness", update: decoding.readVarUint8Array(decoder) };
    } else if (type === MESSAGE_QUERY_AWARENESS) {
      message = { type: "query-awareness" };
    } else if (type === MESSAGE_AUTH) {
      message = { type: "auth" };
      return message;
    } else throw new MalformedMessage(`unknown message type ${type}`);
    if (decoding.hasContent(decoder)) throw new MalformedMessage("trailing bytes after the message");
    return message;
  } catch (error) {
    if (error instanceof MalformedMessage) throw error;
    throw new MalformedMessage(error instanceof Error ? error.message : "unreadable message");
  }
}

function encode(write: (encoder: encoding.Encoder) => void): Uint8Array {
  const encoder = encoding.createEncoder();
  write(encoder);
  return encoding.toUint8Array(encoder);
}

export function syncStep1Message(doc: Y.Doc): Uint8Array {
  return encode((encoder) => {
    encoding.writeVarUint(encoder, MESSAGE_SYNC);
    syncProtocol.writeSyncStep1(encoder, doc);
  });
}

export function syncStep2Message(doc: Y.Doc, stateVector: Uint8Array): Uint8Array {
  return encode((encoder) => {
    encoding.writeVarUint(encoder, MESSAGE_SYNC);
    syncProtocol.writeSyncStep2(encoder, doc, stateVector);
  });
}

export function updateMessage(update: Uint8Array): Uint8Array {
  return encode((encoder) => {
    encoding.writeVarUint(encoder, MESSAGE_SYNC);
    syncProtocol.writeUpdate(encoder, update);
  });
}

export function awarenessMessage(awareness: awarenessProtocol.Awareness, clients: number[]): Uint8Array {
  return encode((encoder) => {
    encoding.writeVarUint(encoder, MESSAGE_AWARENESS);
    encoding.writeVarUint8Array(encoder, awarenessProtocol.encodeAwarenessUpdate(awareness, clients));
  });
}

/** The "stored" acknowledgement: the state vector of what is stored (a document's, or clientID → clock). */
export function storedMessage(stored: Y.Doc | Map<number, number>): Uint8Array {
  return encode((encoder) => {
    encoding.writeVarUint(encoder, MESSAGE_STORED);
    encoding.writeVarUint8Array(encoder, Y.encodeStateVector(stored));
  });
}

/** Reads a "stored" message's state vector (for clients and tests): clientID → clock. */
export function readStoredMessage(data: Uint8Array): Map<number, number> | null {
  const decoder = decoding.createDecoder(data);
  if (decoding.readVarUint(decoder) !== MESSAGE_STORED) return null;
  return Y.decodeStateVector(decoding.readVarUint8Array(decoder));
}
