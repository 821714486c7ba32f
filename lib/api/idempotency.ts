import "server-only";
import { createHash } from "node:crypto";
import { getDerivationById } from "@/db/queries/derivations";
import { getIdempotencyKeyByUserIdAndKey, IdempotencyKeyTaken, type IdempotencyClaim } from "@/db/queries/idempotency";
import type { Derivation } from "@/db/schema";
import { AppError } from "@/lib/errors";

/**
 * Requests that create a derivation may carry `Idempotency-Key: <opaque key>`
 * (our client sends a fresh UUID per distinct submission). The first request
 * with a key creates the derivation and remembers it under the user and key
 * (db/queries/idempotency.ts); any repeat of the same request with the same key,
 * concurrent or later (for a day), gets the same derivation back instead of a
 * second one. Reusing a key for a different request is refused (422).
 */

export const IDEMPOTENCY_KEY_HEADER = "Idempotency-Key";
/** Set on an answer that repeats an earlier request's result. */
export const IDEMPOTENT_REPLAY_HEADER = "Idempotent-Replayed";

const keyPattern = /^[\x21-\x7e]{1,255}$/;

/** The request's key (a structured-header string's quotes removed), null when absent; a malformed key is a 400. */
export function idempotencyKeyOf(request: Request): string | null {
  const raw = request.headers.get(IDEMPOTENCY_KEY_HEADER);
  if (raw === null) return null;
  const key = raw.trim().replace(/^"(.*)"$/, "$1");
  if (!keyPattern.test(key)) {
    const message = "The Idempotency-Key header must be 1 to 255 visible ASCII characters.";
    throw new AppError("bad_request:validation", message, { fieldErrors: { [IDEMPOTENCY_KEY_HEADER]: [message] } });
  }
  return key;
}

/** SHA-256 over the parts that make two requests the same request (each part length-prefixed). */
export function requestFingerprint(...parts: (string | Uint8Array)[]): string {
  const hash = createHash("sha256");
  for (const part of parts) {
    const bytes = typeof part === "string" ? new TextEncoder().encode(part) : part;
    hash.update(`${bytes.byteLength}:`);
    hash.update(bytes);
  }
  return hash.digest("hex");
}

async function earlierAnswer(claim: IdempotencyClaim): Promise<Derivation | null> {
  const record = await getIdempotencyKeyByUserIdAndKey({ userId: claim.userId, key: claim.key });
  if (!record) return null;
  if (record.operation !== claim.operation || record.fingerprint !== claim.fingerprint) {
    throw new AppError("unprocessable:api", "This Idempotency-Key was already used for a different request. Send a new key for a new request.", {
      details: { code: "idempotency_key_reused" },
    });
  }
  const found = await getDerivationById({ id: record.derivationId });
  if (!found) {
    throw new AppError(
      "conflict:derivation",
      "This request was already made with the same Idempotency-Key, and the derivation it created has since been deleted.",
      {
        details: { code: "idempotent_result_deleted", derivationId: record.derivationId },
      },
    );
  }
  const { ownerName: _ownerName, ...derivation } = found;
  return derivation;
}

export interface CreateOnce {
  /** The earlier answer when this request repeats one: answer with it and do no work. */
  earlier: Derivation | null;
  /**
   * Runs `create` with the claim to record in its own transaction (none without
   * a key). If a concurrent request with the same key won meanwhile, its answer
   * is returned instead.
   */
  create(create: (claim: IdempotencyClaim | undefined) => Promise<Derivation>): Promise<{ derivation: Derivation; replayed: boolean }>;
}

/**
 * Starts a create request that runs at most once per user and key: call it once
 * the request is read, answer with `earlier` when set, else do the checks and
 * finish with `create`. Without a key every request creates.
 *
 * @example
 * const once = await beginCreateOnce({ request, userId, operation: "derivation.create", fingerprint });
 * if (once.earlier) return createdResponse({ derivation: once.earlier, replayed: true });
 * return createdResponse(await once.create((idempotency) => createDerivation({ …, idempotency })));
 */
export async function beginCreateOnce({
  request,
  userId,
  operation,
  fingerprint,
}: {
  request: Request;
  userId: string;
  operation: string;
  fingerprint: string;
}): Promise<CreateOnce> {
  const key = idempotencyKeyOf(request);
  if (key === null) return { earlier: null, create: async (create) => ({ derivation: await create(undefined), replayed: false }) };
  const claim: IdempotencyClaim = { userId, key, operation, fingerprint };
  return {
    earlier: await earlierAnswer(claim),
    async create(create) {
      try {
        return { derivation: await create(claim), replayed: false };
      } catch (error) {
        if (!(error instanceof IdempotencyKeyTaken)) throw error;
        const winner = await earlierAnswer(claim);
        if (winner) return { derivation: winner, replayed: true };
        throw new AppError("conflict:derivation", "Another request with this Idempotency-Key is still being processed. Try again in a moment.");
      }
    },
  };
}

/** The 201 answer for a created (or, on a repeat, the earlier) derivation. */
export function createdResponse({ derivation, replayed }: { derivation: Derivation; replayed: boolean }): Response {
  return Response.json({ derivation }, { status: 201, headers: replayed ? { [IDEMPOTENT_REPLAY_HEADER]: "true" } : undefined });
}
