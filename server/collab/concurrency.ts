/**
 * A bound on concurrent database work of the collaboration server. The pool
 * gives up on a request that waits longer than its connection timeout, so a
 * burst (a hundred people reconnecting at once) would fail queries that only
 * had to wait; queued here, they wait without a deadline and run in order.
 */
import type { Authenticator, CollabPersistence, JsonCopyWriter } from "./types";

export class Semaphore {
  private active = 0;
  private readonly waiting: (() => void)[] = [];

  constructor(private readonly limit: number) {}

  async run<T>(task: () => Promise<T>): Promise<T> {
    if (this.active >= this.limit) await new Promise<void>((resolve) => this.waiting.push(resolve));
    this.active += 1;
    try {
      return await task();
    } finally {
      this.active -= 1;
      this.waiting.shift()?.();
    }
  }
}

export function limitPersistence(persistence: CollabPersistence, slots: Semaphore): CollabPersistence {
  return {
    load: (id) => slots.run(() => persistence.load(id)),
    append: (id, update, options) => slots.run(() => persistence.append(id, update, options)),
    updates: (id) => slots.run(() => persistence.updates(id)),
    compact: (id) => slots.run(() => persistence.compact(id)),
    state: (id) => slots.run(() => persistence.state(id)),
  };
}

export function limitJsonCopy(jsonCopy: JsonCopyWriter, slots: Semaphore): JsonCopyWriter {
  return { write: (id, document, authors) => slots.run(() => jsonCopy.write(id, document, authors)) };
}

export function limitAuthenticator(auth: Authenticator, slots: Semaphore): Authenticator {
  const regrant = auth.regrant;
  return {
    authenticate: (token, room, address) => slots.run(() => auth.authenticate(token, room, address)),
    ...(regrant ? { regrant: (userId: string, derivationId: string) => slots.run(() => regrant(userId, derivationId)) } : {}),
  };
}
