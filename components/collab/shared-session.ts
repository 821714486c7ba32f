/**
 * One open derivation's shared document in the browser: the Y.Doc, the
 * connection to the collaboration server (y-websocket's provider, with a
 * short-lived token from `POST /api/derivations/{id}/collab-token`), presence,
 * and which of this client's edits the server has stored.
 *
 * React-free, so the connection logic is tested without a page; the notebook
 * reaches it through `useSharedDocument`. One session per mounted page,
 * destroyed with it.
 *
 * "Stored" follows the server's message type 100: its payload is the server's
 * state vector after it stored an update of ours. Edits are counted as stored
 * only when that vector covers this client's own clock, never because a socket
 * accepted the bytes.
 */
import * as decoding from "lib0/decoding";
import { WebsocketProvider } from "y-websocket";
import * as Y from "yjs";
import { AppError } from "@/lib/errors";

/** The collaboration server's answer to "may I join this document" (`POST …/collab-token`). */
export interface CollabTicket {
  token: string;
  url: string;
  readOnly: boolean;
  expiresAt: string;
  user: CollabUser;
}

export interface CollabUser {
  id: string;
  name: string;
  colour: string;
}

/** What the page says about the connection. */
export type ConnectionState =
  { state: "connecting" } | { state: "live" } | { state: "offline"; message?: string } | { state: "refused"; code: number; reason: string };

/** One person on the page (one entry per person, however many tabs they have open). */
export interface Peer {
  id: string;
  name: string;
  colour: string;
  self: boolean;
}

export interface SessionSnapshot {
  connection: ConnectionState;
  /** The document has come from the server at least once (until then it is not editable). */
  synced: boolean;
  /** This client's edits the server has not confirmed as stored. */
  pending: number;
  /** The server lets this person read only (viewer, reviewer, locked derivation). */
  readOnly: boolean;
  user: CollabUser | null;
  peers: readonly Peer[];
}

/** The subset of y-websocket's provider the session uses; tests pass an in-memory one. */
export interface ProviderLike {
  awareness: AwarenessLike;
  params: Record<string, string>;
  messageHandlers: Array<((encoder: unknown, decoder: decoding.Decoder, provider: never, emitSynced: boolean, type: number) => void) | undefined>;
  synced: boolean;
  on(event: string, listener: (...args: never[]) => void): void;
  off(event: string, listener: (...args: never[]) => void): void;
  connect(): void;
  disconnect(): void;
  destroy(): void;
}

export interface AwarenessLike {
  clientID: number;
  getStates(): Map<number, Record<string, unknown>>;
  getLocalState(): Record<string, unknown> | null;
  setLocalStateField(field: string, value: unknown): void;
  setLocalState(state: Record<string, unknown> | null): void;
  on(event: "change", listener: (...args: never[]) => void): void;
  off(event: "change", listener: (...args: never[]) => void): void;
}

export type ProviderFactory = (url: string, room: string, ydoc: Y.Doc, options: { params: Record<string, string> }) => ProviderLike;

export interface SessionOptions {
  derivationId: string;
  fetchTicket: (derivationId: string) => Promise<CollabTicket>;
  createProvider?: ProviderFactory;
  /** Pauses before another attempt to get a ticket after a network failure; the last repeats. */
  retryDelaysMs?: readonly number[];
}

/** The server's custom message: "stored", with its state vector after storing. */
export const MESSAGE_STORED = 100;

/** Renew the ticket this long before it expires, so a reconnect never presents a stale one. */
const RENEW_BEFORE_MS = 60_000;
const RETRY_DELAYS_MS = [1_000, 3_000, 10_000, 30_000] as const;

const CLOSE_REASONS: Record<number, string> = {
  4400: "the server could not read a message from this page",
  4401: "your access to this document could not be confirmed; reload the page or sign in again",
  4403: "you no longer have access to this derivation",
  4404: "this derivation no longer exists",
  4413: "an edit was too large for the server",
  4429: "too many edits in a short time",
};

/** Codes whose server reason says it all (no access, locked, a role that no longer edits, deleted): shown alone. */
const REASON_SUFFICES = new Set([4403, 4404]);

/** The sentence shown for a refused connection: the server's reason when it gave one. */
export function refusalText(code: number, reason: string): string {
  if (reason && REASON_SUFFICES.has(code)) return /[.!?]$/.test(reason) ? reason : `${reason}.`;
  const known = CLOSE_REASONS[code];
  if (reason && known) return `${reason.replace(/\.$/, "")} — ${known}.`;
  return reason || (known ? `${known[0]!.toUpperCase()}${known.slice(1)}.` : `Closed by the server (code ${code}).`);
}

const defaultProvider: ProviderFactory = (url, room, ydoc, { params }) =>
  // Tabs of one browser talk through the server only: a reader's tab must not reach an editor's through a side channel.
  new WebsocketProvider(url, room, ydoc, { params, disableBc: true }) as unknown as ProviderLike;

export class SharedSession {
  readonly ydoc: Y.Doc;
  /** Origin of this client's own structural and field edits (editors add theirs through yCollab). */
  readonly origin = { local: true } as const;
  readonly undoManager: Y.UndoManager;
  private provider: ProviderLike | null = null;
  private snapshot: SessionSnapshot = { connection: { state: "connecting" }, synced: false, pending: 0, readOnly: true, user: null, peers: [] };
  private listeners = new Set<() => void>();
  private timers = new Set<ReturnType<typeof setTimeout>>();
  private ticket: CollabTicket | null = null;
  private renewing: Promise<void> | null = null;
  private destroyed = false;
  private attempts = 0;
  /** Own clock after each local edit, oldest first, until the server says it stored it. */
  private unstored: number[] = [];
  private storedClock = 0;
  private triedFreshTicket = false;
  private waiters = new Set<() => void>();

  constructor(private readonly options: SessionOptions) {
    this.ydoc = new Y.Doc();
    const cells = this.ydoc.getArray("cells");
    const meta = this.ydoc.getMap("meta");
    // One undo history for the whole document: this client's edits only, across cells.
    this.undoManager = new Y.UndoManager([cells, meta], { trackedOrigins: new Set<unknown>([this.origin]), captureTimeout: 500 });
    this.ydoc.on("afterTransaction", this.onTransaction);
  }

  get awareness(): AwarenessLike | null {
    return this.provider?.awareness ?? null;
  }

  subscribe = (listener: () => void): (() => void) => {
    this.listeners.add(listener);
    return () => this.listeners.delete(listener);
  };

  getSnapshot = (): SessionSnapshot => this.snapshot;

  /** Gets a ticket and connects; call once. */
  start(): void {
    void this.connectWithTicket();
  }

  /** Resolves true once every local edit is stored, false after `timeoutMs`. */
  whenStored(timeoutMs: number): Promise<boolean> {
    if (this.snapshot.pending === 0) return Promise.resolve(true);
    return new Promise((resolve) => {
      const done = () => {
        clearTimeout(timer);
        this.waiters.delete(done);
        resolve(true);
      };
      const timer = setTimeout(() => {
        this.waiters.delete(done);
        resolve(false);
      }, timeoutMs);
      this.waiters.add(done);
    });
  }

  destroy(): void {
    if (this.destroyed) return;
    this.destroyed = true;
    for (const timer of this.timers) clearTimeout(timer);
    this.timers.clear();
    const provider = this.provider;
    this.provider = null;
    if (provider) {
      provider.awareness.off("change", this.onAwareness);
      // Leave the room visibly: others drop this person's cursor and avatar at once.
      provider.awareness.setLocalState(null);
      provider.destroy();
    }
    this.undoManager.destroy();
    this.ydoc.off("afterTransaction", this.onTransaction);
    this.ydoc.destroy();
    this.listeners.clear();
  }

  private set(patch: Partial<SessionSnapshot>): void {
    if (this.destroyed) return;
    this.snapshot = { ...this.snapshot, ...patch };
    for (const listener of this.listeners) listener();
    if (this.snapshot.pending === 0) for (const waiter of [...this.waiters]) waiter();
  }

  private later(fn: () => void, ms: number): void {
    if (this.destroyed) return;
    const timer = setTimeout(() => {
      this.timers.delete(timer);
      fn();
    }, ms);
    this.timers.add(timer);
  }

  private async fetchTicket(): Promise<CollabTicket> {
    const ticket = await this.options.fetchTicket(this.options.derivationId);
    this.ticket = ticket;
    this.scheduleRenewal(ticket);
    return ticket;
  }

  private scheduleRenewal(ticket: CollabTicket): void {
    const left = new Date(ticket.expiresAt).getTime() - Date.now();
    this.later(() => void this.renew(), Math.max(5_000, left - RENEW_BEFORE_MS));
  }

  /** A fresh ticket for the next connection (the provider reads `params` when it connects). */
  private renew(): Promise<void> {
    if (this.renewing || this.destroyed) return this.renewing ?? Promise.resolve();
    this.renewing = this.fetchTicket()
      .then((ticket) => {
        if (this.provider) this.provider.params = { token: ticket.token };
      })
      .catch((error: unknown) => {
        if (isRefusal(error)) this.refuse(error.status === 404 ? 4404 : 4403, error.message);
        // A network failure: the current ticket may still do; the next close tries again.
      })
      .finally(() => {
        this.renewing = null;
      });
    return this.renewing;
  }

  private ticketExpiring(): boolean {
    return !this.ticket || new Date(this.ticket.expiresAt).getTime() - Date.now() < RENEW_BEFORE_MS / 2;
  }

  private async connectWithTicket(): Promise<void> {
    let ticket: CollabTicket;
    try {
      ticket = await this.fetchTicket();
    } catch (error) {
      if (this.destroyed) return;
      if (isRefusal(error)) return this.refuse(error.status === 404 ? 4404 : 4403, error.message);
      const delays = this.options.retryDelaysMs ?? RETRY_DELAYS_MS;
      const delay = delays[Math.min(this.attempts, delays.length - 1)] ?? 30_000;
      this.attempts += 1;
      this.set({ connection: { state: "offline", message: error instanceof Error ? error.message : undefined } });
      this.later(() => void this.connectWithTicket(), delay);
      return;
    }
    if (this.destroyed) return;
    this.attempts = 0;
    const provider = (this.options.createProvider ?? defaultProvider)(ticket.url, this.options.derivationId, this.ydoc, { params: { token: ticket.token } });
    this.provider = provider;
    provider.messageHandlers[MESSAGE_STORED] = (_encoder, decoder) => this.onStored(decoding.readVarUint8Array(decoder));
    provider.awareness.setLocalStateField("user", { id: ticket.user.id, name: ticket.user.name, color: ticket.user.colour, colour: ticket.user.colour });
    provider.awareness.on("change", this.onAwareness);
    provider.on("status", this.onStatus);
    provider.on("sync", this.onSync);
    provider.on("connection-close", this.onClose);
    provider.on("closed", this.onTerminalClose);
    this.set({ readOnly: ticket.readOnly, user: ticket.user });
    this.onAwareness();
    if (provider.synced) this.onSync(true);
  }

  private refuse(code: number, reason: string): void {
    this.provider?.disconnect();
    this.set({ connection: { state: "refused", code, reason: refusalText(code, reason) } });
  }

  private onStatus = ({ status }: { status: "connected" | "disconnected" | "connecting" }) => {
    if (status === "disconnected") {
      if (this.snapshot.connection.state !== "refused") this.set({ connection: { state: "offline" } });
    } else if (status === "connecting" && this.snapshot.connection.state !== "offline") {
      this.set({ connection: { state: "connecting" } });
    }
  };

  private onSync = (synced: boolean) => {
    if (!synced) return;
    this.triedFreshTicket = false;
    this.set({ synced: true, connection: { state: "live" } });
  };

  /** Every closed socket: renew a ticket about to expire before the provider reconnects. */
  private onClose = (event: CloseEvent | null) => {
    const provider = this.provider;
    if (!provider || !event || (event.code >= 4400 && event.code < 4500) || !this.ticketExpiring()) return;
    provider.disconnect();
    void this.renew().then(() => {
      if (this.provider === provider && this.snapshot.connection.state !== "refused") provider.connect();
    });
  };

  /** A 44xx close: the server decided; say why and stop (one fresh-ticket retry for an expired one). */
  private onTerminalClose = ({ code, reason }: { code: number; reason: string }) => {
    const provider = this.provider;
    if (code === 4401 && !this.triedFreshTicket && provider) {
      this.triedFreshTicket = true;
      void this.renew().then(() => {
        if (this.provider === provider && this.snapshot.connection.state !== "refused") provider.connect();
      });
      return;
    }
    this.set({ connection: { state: "refused", code, reason: refusalText(code, reason) } });
  };

  private onAwareness = () => {
    const awareness = this.provider?.awareness;
    if (!awareness) return;
    const peers = new Map<string, Peer>();
    const own = this.snapshot.user;
    if (own) peers.set(own.id, { ...own, self: true });
    for (const [clientId, state] of awareness.getStates()) {
      const user = state.user as { id?: unknown; name?: unknown; colour?: unknown } | undefined;
      if (clientId === awareness.clientID || !user || typeof user.id !== "string" || peers.has(user.id)) continue;
      peers.set(user.id, { id: user.id, name: String(user.name ?? "Someone"), colour: String(user.colour ?? "#5c6169"), self: false });
    }
    const list = [...peers.values()];
    const same = list.length === this.snapshot.peers.length && list.every((peer, i) => samePeer(peer, this.snapshot.peers[i]!));
    if (!same) this.set({ peers: list });
  };

  private onStored(stateVector: Uint8Array): void {
    const clock = Y.decodeStateVector(stateVector).get(this.ydoc.clientID) ?? 0;
    if (clock <= this.storedClock) return;
    this.storedClock = clock;
    this.unstored = this.unstored.filter((end) => end > clock);
    this.set({ pending: this.unstored.length });
  }

  private onTransaction = (transaction: Y.Transaction) => {
    const id = this.ydoc.clientID;
    const after = transaction.afterState.get(id) ?? 0;
    if (after > (transaction.beforeState.get(id) ?? 0) && after > this.storedClock) {
      this.unstored.push(after);
      this.set({ pending: this.unstored.length });
    }
  };
}

function samePeer(a: Peer, b: Peer): boolean {
  return a.id === b.id && a.name === b.name && a.colour === b.colour && a.self === b.self;
}

/** An answer that trying again will not change: signed out, no access, no such derivation. */
function isRefusal(error: unknown): error is AppError {
  return error instanceof AppError && (error.status === 401 || error.status === 403 || error.status === 404);
}
