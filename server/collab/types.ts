/**
 * The collaboration server's injected parts. `server.ts` knows only these
 * interfaces; `server/collab.ts` wires the PostgreSQL-backed ones, and tests
 * may wire others.
 */
import type { AppendUpdateResult, CompactionResult, LoadSharedDocResult, StoredUpdate } from "@/db/queries/collab";
import type { DerivationDocument } from "@/lib/notebook/document";

/**
 * Close codes, in the 4400–4499 range that makes the y-websocket provider stop
 * reconnecting so the page can say why. 1011 (server error) lets it retry.
 */
export const CloseCode = {
  malformed: 4400,
  badToken: 4401,
  noAccess: 4403,
  noDerivation: 4404,
  tooLarge: 4413,
  unreadable: 4422,
  tooMany: 4429,
  serverError: 1011,
  goingAway: 1001,
} as const;

/** A refused connection: closed with `code` and `reason` (at most 123 bytes of UTF-8). */
export class RefusedConnection extends Error {
  constructor(
    readonly code: number,
    readonly reason: string,
  ) {
    super(reason);
    this.name = "RefusedConnection";
  }
}

/** What a verified connection may do. */
export interface ConnectionGrant {
  userId: string;
  derivationId: string;
  /** Viewers and reviewers, or a locked derivation: updates are dropped, presence is kept. */
  readOnly: boolean;
}

export interface Authenticator {
  /** The grant for a token and the room it connects to; throws `RefusedConnection`. */
  authenticate(token: string | null, room: string, address?: string | null): Promise<ConnectionGrant>;
  /** The grant this person would get now (after a membership change); throws `RefusedConnection` when none. */
  regrant?(userId: string, derivationId: string): Promise<ConnectionGrant>;
}

export interface DerivationState {
  locked: boolean;
  content: unknown;
  title: string;
  updatedById: string | null;
}

export interface CollabPersistence {
  load(derivationId: string): Promise<LoadSharedDocResult>;
  /** Stores an update; with `announceAs` (this instance's id) the stored row's key is announced to the other instances. */
  append(derivationId: string, update: Uint8Array, options?: { evenIfLocked?: boolean; announceAs?: string }): Promise<AppendUpdateResult>;
  /** Every stored update (after a missed notification). */
  updates(derivationId: string): Promise<StoredUpdate[]>;
  compact(derivationId: string): Promise<CompactionResult>;
  state(derivationId: string): Promise<DerivationState | null>;
}

export type JsonCopyResult = "saved" | "locked" | "missing" | "skipped";

export interface JsonCopyWriter {
  /** Writes the JSON copy (derivations.content); `authorIds` changed it since the last write (last one first-named actor). */
  write(derivationId: string, document: DerivationDocument, authorIds: string[]): Promise<JsonCopyResult>;
}

export interface NotificationHandlers {
  /** A row was stored: by a server-side write (`from` null) or by the collaboration server `from`. */
  onUpdate(derivationId: string, rowId: number, from: string | null): void;
  /** Another instance's clients changed their presence (a y-protocols awareness update). */
  onAwareness(derivationId: string, update: Uint8Array, from: string): void;
  /** Another instance loaded the document and asks for the presence of this instance's clients. */
  onAwarenessQuery(derivationId: string, from: string): void;
  /** The listening connection came back: notifications may have been missed meanwhile. */
  onReconnect(): void;
  /** Someone's team membership changed (new role, removal): judge their open connections again. */
  onAccessChanged?(userId: string): void;
}

/**
 * Announcements between collaboration servers and from server-side writes
 * (PostgreSQL LISTEN/NOTIFY). Each instance has its own id, carried in what it
 * sends, and hears nothing it sent itself.
 */
export interface UpdateNotifications {
  readonly instanceId: string;
  start(handlers: NotificationHandlers): Promise<void>;
  stop(): Promise<void>;
  /** The largest awareness update `publishAwareness` can carry (a NOTIFY payload is limited). */
  readonly maxAwarenessBytes: number;
  /** Sends presence to the other instances; false when it was not sent (too large, or not connected). */
  publishAwareness(derivationId: string, update: Uint8Array): boolean;
  /** Asks the other instances holding the document to send their clients' presence. */
  queryAwareness(derivationId: string): void;
  /**
   * Reads announced rows (of any documents) on the listening connection; rejects
   * when it is down, which costs nothing: its reconnect rereads every document.
   */
  readUpdates(ids: readonly number[]): Promise<(StoredUpdate & { derivationId: string })[]>;
}

export interface CollabLimits {
  maxMessageBytes: number;
  maxMessagesPerSecond: number;
  /** A document with no connections is written, compacted and unloaded after this pause. */
  unloadDelayMs: number;
  /** The JSON copy is written this long after the latest change ... */
  jsonCopyDelayMs: number;
  /** ... but at least this often during continuous editing. */
  jsonCopyMaxWaitMs: number;
  /** A loaded document is compacted after this many appended updates. */
  compactEvery: number;
}

export interface Logger {
  info(message: string): void;
  warn(message: string): void;
  error(message: string, error?: unknown): void;
}
