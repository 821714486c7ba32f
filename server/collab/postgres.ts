import "server-only";
/** The collaboration server wired to PostgreSQL: what server/collab.ts runs and the integration tests start. */
import { env } from "@/lib/env";
import { allowCollabConnection } from "@/lib/auth/rate-limit";
import { createTokenAuthenticator } from "./auth";
import { Semaphore, limitAuthenticator, limitJsonCopy, limitPersistence } from "./concurrency";
import { createPostgresNotifications } from "./listener";
import { postgresJsonCopy, postgresPersistence } from "./persistence";
import { createCollabServer, type CollabServer } from "./server";
import type { CollabLimits, Logger } from "./types";

export function createPostgresCollabServer({ limits, logger }: { limits: CollabLimits; logger: Logger }): CollabServer {
  // One slot stays free in the pool for anything outside the limit.
  const slots = new Semaphore(Math.max(1, env.DATABASE_POOL_MAX - 1));
  // A JSON copy is a transaction of several statements that may wait for the derivation's row lock
  // (another instance writing the same document's copy): at most a third of the slots, so storing
  // and relaying updates never queue behind a crowd of them.
  const jsonCopySlots = new Semaphore(Math.max(1, Math.floor((env.DATABASE_POOL_MAX - 1) / 3)));
  return createCollabServer({
    auth: limitAuthenticator(createTokenAuthenticator({ secret: env.NEXTAUTH_SECRET, admit: allowCollabConnection }), slots),
    persistence: limitPersistence(postgresPersistence, slots),
    jsonCopy: limitJsonCopy(limitJsonCopy(postgresJsonCopy, slots), jsonCopySlots),
    notifications: createPostgresNotifications({ connectionString: env.DATABASE_URL, logger }),
    limits,
    logger,
  });
}
