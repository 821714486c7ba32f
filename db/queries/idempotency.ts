import "server-only";
import { and, eq, gt, lte } from "drizzle-orm";
import { db, type Executor } from "../client";
import { idempotencyKeys, type IdempotencyKey } from "../schema";

/** How long a key is remembered; a repeat after that is a new request. */
export const IDEMPOTENCY_KEY_TTL_HOURS = 24;

/** What a create request claims: this user's key, for this operation and this request. */
export interface IdempotencyClaim {
  userId: string;
  key: string;
  operation: string;
  fingerprint: string;
}

/**
 * Thrown inside a creating transaction when another request already holds the
 * key (committed, or committed while this one waited on the unique index), so
 * that the transaction rolls back and the caller answers as for a repeat.
 */
export class IdempotencyKeyTaken extends Error {
  constructor() {
    super("the idempotency key was claimed by an earlier request");
    this.name = "IdempotencyKeyTaken";
  }
}

function cutoff(): Date {
  return new Date(Date.now() - IDEMPOTENCY_KEY_TTL_HOURS * 3_600_000);
}

/** The unexpired record of this user's key, or null. */
export async function getIdempotencyKeyByUserIdAndKey(
  { userId, key }: { userId: string; key: string },
  executor: Executor = db,
): Promise<IdempotencyKey | null> {
  const [row] = await executor
    .select()
    .from(idempotencyKeys)
    .where(and(eq(idempotencyKeys.userId, userId), eq(idempotencyKeys.key, key), gt(idempotencyKeys.createdAt, cutoff())))
    .limit(1);
  return row ?? null;
}

/**
 * Records the key with the derivation just created, inside the creating
 * transaction. A concurrent request with the same key waits on the unique
 * index until this transaction ends; if the key is taken, throws
 * IdempotencyKeyTaken. The user's expired keys are cleared on the way.
 */
export async function claimIdempotencyKey({ claim, derivationId }: { claim: IdempotencyClaim; derivationId: string }, executor: Executor): Promise<void> {
  await executor.delete(idempotencyKeys).where(and(eq(idempotencyKeys.userId, claim.userId), lte(idempotencyKeys.createdAt, cutoff())));
  const inserted = await executor
    .insert(idempotencyKeys)
    .values({ userId: claim.userId, key: claim.key, operation: claim.operation, fingerprint: claim.fingerprint, derivationId })
    .onConflictDoNothing({ target: [idempotencyKeys.userId, idempotencyKeys.key] })
    .returning({ id: idempotencyKeys.id });
  if (inserted.length === 0) throw new IdempotencyKeyTaken();
}
