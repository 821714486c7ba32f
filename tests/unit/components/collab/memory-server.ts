/**
 * An in-memory stand-in for the collaboration server, for component tests:
 * one server Y.Doc per room, connections that relay document updates and
 * presence, the "stored" acknowledgement (message type 100, the server's state
 * vector after storing), read-only connections whose updates are dropped,
 * refusals by close code, and a switch to hold acknowledgements back.
 */
import * as decoding from "lib0/decoding";
import * as encoding from "lib0/encoding";
import { Awareness, applyAwarenessUpdate, encodeAwarenessUpdate } from "y-protocols/awareness";
import * as Y from "yjs";
import { MESSAGE_STORED, type CollabTicket, type ProviderFactory, type ProviderLike } from "@/components/collab/shared-session";
import { documentToYDoc } from "@/lib/notebook/document/shared-doc";
import type { DerivationDocument } from "@/lib/notebook/document";

type Listener = (...args: never[]) => void;

export interface TicketOptions {
  id: string;
  name: string;
  colour?: string;
  readOnly?: boolean;
}

export class MemoryCollabServer {
  readonly doc = new Y.Doc();
  readonly connections = new Set<MemoryProvider>();
  /** token -> who and how */
  readonly tokens = new Map<string, { readOnly: boolean }>();
  /** A token presented here is refused with this close (code, reason). */
  refuse: ((token: string) => { code: number; reason: string } | null) | null = null;
  /** While true, stored edits are not acknowledged. */
  holdAcks = false;
  private heldAcks = new Set<MemoryProvider>();
  /** Updates from read-only connections the server dropped. */
  dropped = 0;

  constructor(document?: DerivationDocument) {
    if (document) documentToYDoc(document, this.doc);
  }

  ticket(user: TicketOptions): CollabTicket {
    const token = `token-${user.id}-${this.tokens.size}`;
    this.tokens.set(token, { readOnly: Boolean(user.readOnly) });
    return {
      token,
      url: "ws://memory/collab",
      readOnly: Boolean(user.readOnly),
      expiresAt: new Date(Date.now() + 10 * 60_000).toISOString(),
      user: { id: user.id, name: user.name, colour: user.colour ?? "#0f5f63" },
    };
  }

  provider: ProviderFactory = (_url, _room, ydoc, { params }) => new MemoryProvider(this, ydoc, params);

  /** An update from a connection: dropped when read-only, else stored, relayed and acknowledged. */
  receive(from: MemoryProvider, update: Uint8Array): void {
    if (this.tokens.get(from.params.token ?? "")?.readOnly) {
      this.dropped += 1;
      return;
    }
    Y.applyUpdate(this.doc, update, from);
    for (const other of this.connections) if (other !== from) other.deliver(update);
    if (this.holdAcks) this.heldAcks.add(from);
    else from.acknowledge(Y.encodeStateVector(this.doc));
  }

  releaseAcks(): void {
    this.holdAcks = false;
    for (const connection of this.heldAcks) if (this.connections.has(connection)) connection.acknowledge(Y.encodeStateVector(this.doc));
    this.heldAcks.clear();
  }

  relayAwareness(from: MemoryProvider, update: Uint8Array): void {
    for (const other of this.connections) if (other !== from) applyAwarenessUpdate(other.awareness, update, other);
  }
}

export class MemoryProvider implements ProviderLike {
  readonly awareness: Awareness;
  messageHandlers: ProviderLike["messageHandlers"] = [];
  synced = false;
  connected = false;
  private listeners = new Map<string, Set<Listener>>();

  constructor(
    private readonly server: MemoryCollabServer,
    private readonly ydoc: Y.Doc,
    public params: Record<string, string>,
  ) {
    this.awareness = new Awareness(ydoc);
    ydoc.on("update", this.onUpdate);
    this.awareness.on("update", this.onAwareness);
    queueMicrotask(() => this.connect());
  }

  on(event: string, listener: Listener): void {
    if (!this.listeners.has(event)) this.listeners.set(event, new Set());
    this.listeners.get(event)!.add(listener);
  }

  off(event: string, listener: Listener): void {
    this.listeners.get(event)?.delete(listener);
  }

  private emit(event: string, ...args: unknown[]): void {
    for (const listener of this.listeners.get(event) ?? []) (listener as (...values: unknown[]) => void)(...args);
  }

  connect(): void {
    if (this.connected) return;
    const refusal = this.server.refuse?.(this.params.token ?? "");
    this.emit("status", { status: "connecting" });
    if (refusal) {
      this.emit("connection-close", { code: refusal.code, reason: refusal.reason }, this);
      this.emit("closed", refusal, this);
      return;
    }
    this.connected = true;
    this.server.connections.add(this);
    this.emit("status", { status: "connected" });
    // Sync: the server's state to the client, the client's missing updates to the server.
    Y.applyUpdate(this.ydoc, Y.encodeStateAsUpdate(this.server.doc, Y.encodeStateVector(this.ydoc)), this);
    const missing = Y.encodeStateAsUpdate(this.ydoc, Y.encodeStateVector(this.server.doc));
    if (missing.length > 2) this.server.receive(this, missing);
    this.server.relayAwareness(this, encodeAwarenessUpdate(this.awareness, [this.awareness.clientID]));
    for (const other of this.server.connections) {
      if (other !== this) applyAwarenessUpdate(this.awareness, encodeAwarenessUpdate(other.awareness, [other.awareness.clientID]), this);
    }
    this.synced = true;
    this.emit("sync", true);
  }

  disconnect(): void {
    if (!this.connected) return;
    this.connected = false;
    this.synced = false;
    this.server.connections.delete(this);
    this.emit("status", { status: "disconnected" });
  }

  destroy(): void {
    this.disconnect();
    this.ydoc.off("update", this.onUpdate);
    this.awareness.off("update", this.onAwareness);
    this.awareness.destroy();
  }

  /** Another client's update, relayed by the server. */
  deliver(update: Uint8Array): void {
    Y.applyUpdate(this.ydoc, update, this);
  }

  acknowledge(stateVector: Uint8Array): void {
    const encoder = encoding.createEncoder();
    encoding.writeVarUint8Array(encoder, stateVector);
    this.messageHandlers[MESSAGE_STORED]?.(
      encoding.createEncoder(),
      decoding.createDecoder(encoding.toUint8Array(encoder)),
      undefined as never,
      true,
      MESSAGE_STORED,
    );
  }

  private onUpdate = (update: Uint8Array, origin: unknown) => {
    if (origin !== this && this.connected) this.server.receive(this, update);
  };

  private onAwareness = ({ added, updated, removed }: { added: number[]; updated: number[]; removed: number[] }, origin: unknown) => {
    if (origin === this || !this.connected) return;
    this.server.relayAwareness(this, encodeAwarenessUpdate(this.awareness, [...added, ...updated, ...removed]));
  };
}
