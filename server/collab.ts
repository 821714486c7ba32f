/**
 * The collaboration server's entry: the shared-document websocket server on
 * COLLAB_HOST:COLLAB_PORT (127.0.0.1 by default) under /collab, wired to PostgreSQL.
 * Run several against one database and they pass stored updates and presence
 * to each other through LISTEN/NOTIFY (docs/deploy.md). Run it with
 * `npm run collab` (node --conditions=react-server --import tsx server/collab.ts);
 * the start, dev, demo and browser-test commands do. SIGTERM or SIGINT closes
 * connections, writes and compacts every loaded document, then exits.
 */
import { closeDatabase } from "@/db/client";
import { env } from "@/lib/env";
import { createPostgresCollabServer } from "./collab/postgres";
import { collabLimitsFromEnv, consoleLogger } from "./collab/setup";

const server = createPostgresCollabServer({ limits: collabLimitsFromEnv(env), logger: consoleLogger });
const port = await server.listen(env.COLLAB_PORT, env.COLLAB_HOST);
consoleLogger.info(`listening on ws://${env.COLLAB_HOST}:${port}/collab (pid ${process.pid}, instance ${server.instanceId})`);

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
