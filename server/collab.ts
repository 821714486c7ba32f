/**
 * The collaboration server's entry: the shared-document websocket server on
 * 127.0.0.1:COLLAB_PORT under /collab, wired to PostgreSQL. Run it with
 * `npx tsx --conditions=react-server server/collab.ts` (the start, dev, demo
 * and test scripts do). SIGTERM or SIGINT closes connections, writes and
 * compacts every loaded document, then exits.
 */
import { closeDatabase } from "@/db/client";
import { env } from "@/lib/env";
import { createTokenAuthenticator } from "./collab/auth";
import { createPostgresNotifications } from "./collab/listener";
import { postgresJsonCopy, postgresPersistence } from "./collab/persistence";
import { createCollabServer } from "./collab/server";
import { collabLimitsFromEnv, consoleLogger } from "./collab/setup";

const server = createCollabServer({
  auth: createTokenAuthenticator({ secret: env.NEXTAUTH_SECRET }),
  persistence: postgresPersistence,
  jsonCopy: postgresJsonCopy,
  notifications: createPostgresNotifications({ connectionString: env.DATABASE_URL, logger: consoleLogger }),
  limits: collabLimitsFromEnv(env),
  logger: consoleLogger,
});

const port = await server.listen(env.COLLAB_PORT, "127.0.0.1");
consoleLogger.info(`listening on ws://127.0.0.1:${port}/collab (pid ${process.pid})`);

let stopping = false;
async function stop(signal: string): Promise<void> {
  if (stopping) return;
  stopping = true;
  consoleLogger.info(`${signal}: writing documents and stopping`);
  await server.close();
  await closeDatabase();
  process.exit(0);
}
process.on("SIGTERM", () => void stop("SIGTERM"));
process.on("SIGINT", () => void stop("SIGINT"));
