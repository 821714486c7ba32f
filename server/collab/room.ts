/**
 * One loaded shared document and its connections.
 *
 * The structure follows the utilities of `@y/websocket-server` (MIT; its README
 * invites forking them): a Y.Doc with an Awareness, a set of connections, and
 * relaying of document and awareness updates. What differs: an update is relayed
 * at once and acknowledged to its sender (MESSAGE_STORED) only after it is stored,
 * with the state vector of what is stored; read-only connections have their updates dropped; loading,
 * the JSON copy and unloading go through injected modules; each document has
 * its own timers (no module-wide debouncer).
 *
 * With more than one collaboration server, the others learn of a stored update
 * from its announced key (derivation, row id, instance; see listener.ts), read
 * that row and apply it here, which relays it to this room's connections.
 * Presence goes the same way, throttled, as small awareness updates.
 */
import * as awarenessProtocol from "y-protocols/awareness";
import * as Y from "yjs";
import type { StoredUpdate } from "@/db/queries/collab";
import { parseStoredDocument, type DerivationDocument } from "@/lib/notebook/document";
import { SharedDocumentError, replaceSharedDocument, yDocToDocument } from "@/lib/notebook/document/shared-doc";
import { awarenessMessage, storedMessage, syncStep1Message, syncStep2Message, updateMessage, type IncomingMessage } from "./protocol";
import {
  CloseCode,
  type CollabLimits,
  type CollabPersistence,
  type ConnectionGrant,
  type JsonCopyWriter,
  type Logger,
  type UpdateNotifications,
} from "./types";

/** What a room needs of a connection. */
export interface RoomConnection {
  readonly grant: ConnectionGrant;
  send(data: Uint8Array): void;
  close(code: number, reason: string): void;
}

interface ConnectionState {
  /** Awareness client ids this connection set. */
  awarenessIds: Set<number>;
}

/** Origins of changes that do not come from a connection. */
const LOAD = "load";
const NOTIFIED = "notified";
const LOCK = "lock";
/** Presence that came from another instance (never sent back out). */
const RELAYED = "relayed";
/** Presence removed because its connection left. */
const LEFT = "left";
/** Presence changes of this room's clients are sent to other instances at most this often. */
export const AWARENESS_RELAY_MS = 50;
/** How long to wait before storing again after the database refused a write (it keeps the updates meanwhile). */
const STORE_RETRY_MS = 1000;

function isEmptyUpdate(update: Uint8Array): boolean {
  return update.length === 2 && update[0] === 0 && update[1] === 0;
}

export interface RoomDependencies {
  persistence: CollabPersistence;
  jsonCopy: JsonCopyWriter;
  limits: CollabLimits;
  logger: Logger;
  /** The other collaboration servers (announcements of stored updates, presence); absent with one instance in tests. */
  peers?: UpdateNotifications;
  /** Called once the room has unloaded (the server forgets it). */
  onUnloaded: (room: Room) => void;
}

export class Room {
  readonly doc = new Y.Doc({ gc: true });
  readonly awareness = new awarenessProtocol.Awareness(this.doc);
  readonly connections = new Map<RoomConnection, ConnectionState>();
  /** Approved and locked: every connection is read-only. */
  locked = false;
  private loaded = false;
  private resyncAfterLoad = false;
  private unloadTimer: ReturnType<typeof setTimeout> | null = null;
  private unloading: Promise<void> | null = null;
  private jsonTimer: ReturnType<typeof setTimeout> | null = null;
  private jsonDirtySince: number | null = null;
  private jsonWriting: Promise<void> | null = null;
  private lastJson: string | null = null;
  private readonly authors = new Set<string>();
  private appendsSinceCompaction = 0;
  private compacting: Promise<void> | null = null;
  /** Updates received and not yet stored, in arrival order, with the connection each came from. */
  private pending: { connection: RoomConnection; update: Uint8Array }[] = [];
  /** The loop storing `pending`, while it runs. */
  private storing: Promise<void> | null = null;
  /** Per client, the clock up to which its updates are stored: what an acknowledgement covers. */
  private storedVector = new Map<number, number>();
  /** Awareness client ids of this room's clients whose change is still to be sent to the other instances. */
  private awarenessOut = new Set<number>();
  private awarenessTimer: ReturnType<typeof setTimeout> | null = null;
  private destroyed = false;

  /** Counts an update as stored in the acknowledgements (updates of one client arrive in order). */
  private markStored(update: Uint8Array): void {
    for (const struct of Y.decodeUpdate(update).structs) {
      const end = struct.id.clock + struct.length;
      if (end > (this.storedVector.get(struct.id.client) ?? 0)) this.storedVector.set(struct.id.client, end);
    }
  }

  /** Updates stored and applied since the room loaded (statistics and tests). */
  storedCount = 0;

  constructor(
    readonly derivationId: string,
    private readonly deps: RoomDependencies,
  ) {
    this.awareness.setLocalState(null);
    this.doc.on("update", (update: Uint8Array, origin: unknown) => {
      if (origin === LOAD) return;
      const message = updateMessage(update);
      for (const connection of this.connections.keys()) if (connection !== origin) connection.send(message);
      this.scheduleJsonCopy();
    });
    this.awareness.on("update", ({ added, updated, removed }: { added: number[]; updated: number[]; removed: number[] }, origin: unknown) => {
      const changed = [...added, ...updated, ...removed];
      const state = this.connections.get(origin as RoomConnection);
      if (state) {
        for (const id of [...added, ...updated]) state.awarenessIds.add(id);
        for (const id of removed) state.awarenessIds.delete(id);
      }
      // Everyone, the sender included: a provider that hears nothing for 30 s reconnects.
      const message = awarenessMessage(this.awareness, changed);
      for (const connection of this.connections.keys()) connection.send(message);
      // Only what this room's own clients did goes to the other instances (not what they sent us,
      // nor a state that timed out here, which its own instance may still hold).
      if (state || origin === LEFT) this.relayAwareness(changed);
    });
  }

  /**
   * Loads the stored updates (seeding them from the JSON content the first
   * time). A locked derivation's shared state is brought to the approved
   * content. Throws a `RefusedConnection`-like result through `loadError`.
   */
  async load(): Promise<{ ok: true } | { ok: false; code: number; reason: string }> {
    const result = await this.deps.persistence.load(this.derivationId);
    if (result.status === "missing") return { ok: false, code: CloseCode.noDerivation, reason: "No such derivation." };
    if (result.status === "unreadable") {
      return { ok: false, code: CloseCode.unreadable, reason: "The stored document does not read; restore a revision from its history." };
    }
    for (const { update } of result.updates) Y.applyUpdate(this.doc, update, LOAD);
    this.storedVector = Y.decodeStateVector(Y.encodeStateVector(this.doc));
    this.lastJson = this.currentJson();
    const state = await this.deps.persistence.state(this.derivationId);
    if (!state) return { ok: false, code: CloseCode.noDerivation, reason: "No such derivation." };
    if (state.locked) await this.becomeLocked(state.content, state.title);
    else {
      // After a crash the JSON copy may lag the stored updates: bring it up to date.
      const stored = parseStoredDocument(state.content, { title: state.title });
      const storedJson = stored.ok ? JSON.stringify(stored.document) : null;
      if (storedJson !== this.lastJson) {
        this.lastJson = storedJson;
        this.scheduleJsonCopy();
      }
    }
    this.loaded = true;
    if (this.resyncAfterLoad) await this.resync();
    this.deps.peers?.queryAwareness(this.derivationId);
    return { ok: true };
  }

  get isLoaded(): boolean {
    return this.loaded;
  }

  get isUnloading(): boolean {
    return this.unloading !== null;
  }

  private isReadOnly(connection: RoomConnection): boolean {
    return connection.grant.readOnly || this.locked;
  }

  /** Adds a verified connection: sends sync step 1 and the current presence. */
  addConnection(connection: RoomConnection): void {
    if (this.unloadTimer) clearTimeout(this.unloadTimer);
    this.unloadTimer = null;
    this.connections.set(connection, { awarenessIds: new Set() });
    connection.send(syncStep1Message(this.doc));
    const states = Array.from(this.awareness.getStates().keys());
    if (states.length > 0) connection.send(awarenessMessage(this.awareness, states));
  }

  removeConnection(connection: RoomConnection): void {
    const state = this.connections.get(connection);
    if (!state) return;
    this.connections.delete(connection);
    awarenessProtocol.removeAwarenessStates(this.awareness, Array.from(state.awarenessIds), LEFT);
    if (this.connections.size === 0 && !this.unloading) {
      this.unloadTimer = setTimeout(() => void this.unload(), this.deps.limits.unloadDelayMs);
    }
  }

  /** Handles one read message of a connection in this room. */
  handle(connection: RoomConnection, message: IncomingMessage): void {
    const state = this.connections.get(connection);
    if (!state) return;
    switch (message.type) {
      case "sync-step-1":
        connection.send(syncStep2Message(this.doc, message.stateVector));
        return;
      case "update":
        // Read-only: never applied, stored or relayed.
        if (this.isReadOnly(connection)) return;
        if (isEmptyUpdate(message.update)) {
          connection.send(storedMessage(this.storedVector));
          return;
        }
        // Relayed at once (the others see it without waiting for the database); acknowledged to
        // its sender only once stored. Should the server stop before storing it, the sender still
        // holds it and sends it again on reconnect, since the restarted server's state lacks it.
        Y.applyUpdate(this.doc, message.update, connection);
        this.pending.push({ connection, update: message.update });
        this.storing ??= this.store();
        return;
      case "awareness":
        awarenessProtocol.applyAwarenessUpdate(this.awareness, message.update, connection);
        return;
      case "query-awareness":
        connection.send(awarenessMessage(this.awareness, Array.from(this.awareness.getStates().keys())));
        return;
      case "auth":
        return;
    }
  }

  /**
   * Stores pending updates: everything that arrived while the previous append
   * was in flight goes into one row (a group commit), then each update is
   * applied with its connection as origin (which relays it to the others) and
   * each sender is acknowledged. A storage failure closes the senders with
   * 1011: their providers reconnect and send again what was not stored.
   */
  private async store(): Promise<void> {
    try {
      while (this.pending.length > 0 && !this.locked) {
        const batch = this.pending;
        this.pending = [];
        const update = batch.length === 1 ? batch[0]!.update : Y.mergeUpdates(batch.map((entry) => entry.update));
        const senders = new Set(batch.map((entry) => entry.connection));
        let result;
        try {
          result = await this.deps.persistence.append(this.derivationId, update, { announceAs: this.deps.peers?.instanceId });
        } catch (error) {
          // Already applied here, so a reconnecting sender would not send it again: keep it and retry.
          this.deps.logger.error(`storing an update of ${this.derivationId} failed; retrying`, error);
          this.pending = [...batch, ...this.pending];
          await new Promise((resolve) => setTimeout(resolve, STORE_RETRY_MS));
          continue;
        }
        if (result.status === "refused") {
          this.pending = [];
          await this.onAppendRefused();
          return;
        }
        for (const entry of batch) this.markStored(entry.update);
        this.storedCount += batch.length;
        for (const sender of senders) {
          this.authors.delete(sender.grant.userId);
          this.authors.add(sender.grant.userId);
        }
        const acknowledgement = storedMessage(this.storedVector);
        for (const sender of senders) sender.send(acknowledgement);
        this.appendsSinceCompaction += 1;
        if (this.appendsSinceCompaction >= this.deps.limits.compactEvery) void this.compact();
      }
    } finally {
      this.storing = null;
    }
  }

  /** An append was refused: the derivation was locked, or is gone. */
  private async onAppendRefused(): Promise<void> {
    const state = await this.deps.persistence.state(this.derivationId).catch(() => null);
    if (!state) {
      for (const connection of this.connections.keys()) connection.close(CloseCode.noDerivation, "This derivation was deleted.");
      return;
    }
    if (state.locked) await this.becomeLocked(state.content, state.title);
  }

  /**
   * The derivation is approved and locked: the shared state becomes the
   * approved content (an edit stored in the moment before the lock is undone
   * for everyone) and connections that could edit are closed with 4403, so
   * their pages reload read-only.
   */
  private async becomeLocked(content: unknown, title: string): Promise<void> {
    if (this.locked) return;
    this.locked = true;
    const approved = parseStoredDocument(content, { title });
    if (approved.ok && this.currentJson() !== JSON.stringify(approved.document)) {
      const copy = new Y.Doc();
      Y.applyUpdate(copy, Y.encodeStateAsUpdate(this.doc));
      const before = Y.encodeStateVector(copy);
      replaceSharedDocument(copy, approved.document, LOCK);
      const update = Y.encodeStateAsUpdate(copy, before);
      copy.destroy();
      const stored = await this.deps.persistence.append(this.derivationId, update, { evenIfLocked: true, announceAs: this.deps.peers?.instanceId });
      if (stored.status === "stored") {
        Y.applyUpdate(this.doc, update, LOCK);
        this.markStored(update);
      }
    }
    this.lastJson = this.currentJson();
    for (const connection of this.connections.keys()) {
      if (!connection.grant.readOnly) connection.close(CloseCode.noAccess, "This derivation was approved and locked; reload to read it.");
    }
  }

  /** A stored update was announced while this room loads: it rereads every stored update once loaded. */
  announcedWhileLoading(): void {
    if (!this.loaded) this.resyncAfterLoad = true;
  }

  /**
   * Applies stored updates that were announced (a server-side write, or another
   * instance's client), which relays them to this room's connections. The server
   * reads the announced rows of all its rooms at once (server.ts).
   */
  applyStored(rows: readonly StoredUpdate[]): void {
    if (!this.loaded || this.unloading || rows.length === 0) return;
    Y.transact(
      this.doc,
      () => {
        for (const { update } of rows) {
          Y.applyUpdate(this.doc, update, NOTIFIED);
          this.markStored(update);
        }
      },
      NOTIFIED,
    );
  }

  /** Applies every stored update (after notifications may have been missed); applying one twice changes nothing. */
  async resync(): Promise<void> {
    if (!this.loaded) {
      this.resyncAfterLoad = true;
      return;
    }
    const rows = await this.deps.persistence.updates(this.derivationId);
    Y.transact(
      this.doc,
      () => {
        for (const { update } of rows) {
          Y.applyUpdate(this.doc, update, NOTIFIED);
          this.markStored(update);
        }
      },
      NOTIFIED,
    );
  }

  // -------------------------------------------------------------------------
  // Presence across instances

  /** Another instance's clients changed their presence: apply it here (which sends it to this room's connections). */
  applyRemoteAwareness(update: Uint8Array): void {
    if (this.unloading) return;
    awarenessProtocol.applyAwarenessUpdate(this.awareness, update, RELAYED);
  }

  /** Another instance loaded this document: send it the presence of this room's clients. */
  sendLocalAwareness(): void {
    const ids: number[] = [];
    for (const state of this.connections.values()) ids.push(...state.awarenessIds);
    this.relayAwareness(ids);
  }

  private relayAwareness(ids: readonly number[]): void {
    if (!this.deps.peers || ids.length === 0 || this.destroyed) return;
    for (const id of ids) this.awarenessOut.add(id);
    this.awarenessTimer ??= setTimeout(() => this.flushAwareness(), AWARENESS_RELAY_MS);
  }

  /**
   * Sends the pending presence changes as one awareness update, or one per
   * client when together they do not fit in a notification; a single client's
   * presence too large for one is dropped here (its own instance's clients
   * still see it) and logged.
   */
  private flushAwareness(): void {
    this.awarenessTimer = null;
    const peers = this.deps.peers;
    const ids = Array.from(this.awarenessOut);
    this.awarenessOut.clear();
    if (!peers || ids.length === 0 || this.destroyed) return;
    const all = awarenessProtocol.encodeAwarenessUpdate(this.awareness, ids);
    if (all.byteLength <= peers.maxAwarenessBytes) {
      peers.publishAwareness(this.derivationId, all);
      return;
    }
    for (const id of ids) {
      const one = awarenessProtocol.encodeAwarenessUpdate(this.awareness, [id]);
      if (!peers.publishAwareness(this.derivationId, one) && one.byteLength > peers.maxAwarenessBytes) {
        this.deps.logger.warn(
          `presence of client ${id} in ${this.derivationId} is ${one.byteLength} bytes, over the ${peers.maxAwarenessBytes} a notification carries; not sent to other instances`,
        );
      }
    }
  }

  // -------------------------------------------------------------------------
  // The JSON copy

  private currentDocument(): DerivationDocument | null {
    try {
      return yDocToDocument(this.doc);
    } catch (error) {
      if (error instanceof SharedDocumentError) return null;
      throw error;
    }
  }

  private currentJson(): string | null {
    const document = this.currentDocument();
    return document ? JSON.stringify(document) : null;
  }

  private scheduleJsonCopy(): void {
    const now = Date.now();
    this.jsonDirtySince ??= now;
    if (this.jsonTimer) clearTimeout(this.jsonTimer);
    const wait = Math.max(0, Math.min(this.deps.limits.jsonCopyDelayMs, this.jsonDirtySince + this.deps.limits.jsonCopyMaxWaitMs - now));
    this.jsonTimer = setTimeout(() => void this.writeJsonCopy(), wait);
  }

  /** Writes the JSON copy now if the document changed since the last one. */
  async writeJsonCopy(): Promise<void> {
    if (this.jsonTimer) clearTimeout(this.jsonTimer);
    this.jsonTimer = null;
    this.jsonDirtySince = null;
    while (this.jsonWriting) await this.jsonWriting;
    const document = this.currentDocument();
    if (!document) {
      this.deps.logger.warn(`the shared document of ${this.derivationId} does not read; its JSON copy is left as it was`);
      return;
    }
    const json = JSON.stringify(document);
    if (json === this.lastJson || this.locked) return;
    const authors = Array.from(this.authors).reverse();
    this.authors.clear();
    this.jsonWriting = (async () => {
      try {
        const result = await this.deps.jsonCopy.write(this.derivationId, document, authors);
        if (result === "saved" || result === "skipped") this.lastJson = json;
        else if (result === "locked") await this.onAppendRefused();
      } catch (error) {
        for (const author of authors) this.authors.add(author);
        this.deps.logger.error(`writing the JSON copy of ${this.derivationId} failed`, error);
        this.scheduleJsonCopy();
      }
    })();
    try {
      await this.jsonWriting;
    } finally {
      this.jsonWriting = null;
    }
  }

  // -------------------------------------------------------------------------
  // Compaction and unloading

  async compact(): Promise<void> {
    if (this.compacting) return this.compacting;
    this.appendsSinceCompaction = 0;
    this.compacting = this.deps.persistence
      .compact(this.derivationId)
      .then(() => undefined)
      .catch((error: unknown) => this.deps.logger.error(`compacting ${this.derivationId} failed`, error))
      .finally(() => {
        this.compacting = null;
      });
    return this.compacting;
  }

  /** Waits for every connection's pending updates to be stored. */
  async settle(): Promise<void> {
    while (this.storing) await this.storing;
  }

  /**
   * Writes the JSON copy, compacts and forgets the document, once it has had
   * no connections for the unload pause (or at once when `force`d on shutdown).
   */
  unload(force = false): Promise<void> {
    if (this.unloading) return this.unloading;
    if (!force && this.connections.size > 0) return Promise.resolve();
    if (this.unloadTimer) clearTimeout(this.unloadTimer);
    this.unloadTimer = null;
    this.unloading = (async () => {
      try {
        await this.settle();
        if (this.loaded) {
          await this.writeJsonCopy();
          await this.compact();
        }
      } catch (error) {
        this.deps.logger.error(`unloading ${this.derivationId} failed`, error);
      } finally {
        if (this.jsonTimer) clearTimeout(this.jsonTimer);
        // Other instances drop this room's clients' presence now rather than after it times out.
        const leaving: number[] = [];
        for (const state of this.connections.values()) leaving.push(...state.awarenessIds);
        if (leaving.length > 0) awarenessProtocol.removeAwarenessStates(this.awareness, leaving, LEFT);
        if (this.awarenessTimer) {
          clearTimeout(this.awarenessTimer);
          this.flushAwareness();
        }
        this.destroyed = true;
        this.awareness.destroy();
        this.doc.destroy();
        this.deps.onUnloaded(this);
      }
    })();
    return this.unloading;
  }
}
