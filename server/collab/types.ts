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
}

export interface DerivationState {
  locked: boolean;
  content: unknown;
  title: string;
  updatedById: string | null;
}

export interface CollabPersistence {
  load(derivationId: string): Promise<LoadSharedDocResult>;
  append(derivationId: string, update: Uint8Array, options?: { evenIfLocked?: boolean }): Promise<AppendUpdateResult>;
  /** Every stored update (after a missed notification). */
  updates(derivationId: string): Promise<StoredUpdate[]>;
  /** One stored update by row id; null once folded by a compaction. */
  update(derivationId: string, id: number): Promise<StoredUpdate | null>;
  compact(derivationId: string): Promise<CompactionResult>;
  state(derivationId: string): Promise<DerivationState | null>;
}

export type JsonCopyResult = "saved" | "locked" | "missing" | "skipped";

export interface JsonCopyWriter {
  /** Writes the JSON copy (derivations.content); `authorIds` changed it since the last write (last one first-named actor). */
  write(derivationId: string, document: DerivationDocument, authorIds: string[]): Promise<JsonCopyResult>;
}

/** Announcements of server-side writes (PostgreSQL LISTEN). */
export interface UpdateNotifications {
  start(handlers: { onUpdate: (derivationId: string, rowId: number) => void; onReconnect: () => void }): Promise<void>;
  stop(): Promise<void>;
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
