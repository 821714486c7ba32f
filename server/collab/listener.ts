/**
 * LISTEN on `holonomy_doc` over its own connection (not from the pool: a
 * pooled client would be handed back and lose the LISTEN). Notifications sent
 * while it is down are lost, so after every reconnect the server resyncs its
 * loaded documents from storage.
 */
import { Client } from "pg";
import { SHARED_DOC_CHANNEL } from "@/db/queries/collab";
import type { Logger, UpdateNotifications } from "./types";

const PAYLOAD = /^([0-9a-f-]{36}):(\d+)$/i;

export function createPostgresNotifications({ connectionString, logger }: { connectionString: string; logger: Logger }): UpdateNotifications {
  let client: Client | null = null;
  let stopped = false;
  let retry: ReturnType<typeof setTimeout> | null = null;
  let handlers: Parameters<UpdateNotifications["start"]>[0] | null = null;

  async function connect(isReconnect: boolean): Promise<void> {
    const next = new Client({ connectionString, connectionTimeoutMillis: 3000 });
    next.on("notification", (message) => {
      const match = message.channel === SHARED_DOC_CHANNEL ? PAYLOAD.exec(message.payload ?? "") : null;
      if (match) handlers?.onUpdate(match[1]!.toLowerCase(), Number(match[2]));
    });
    const lost = (reason: string) => {
      if (client !== next || stopped) return;
      client = null;
      logger.warn(`notification connection lost (${reason}); reconnecting`);
      next.removeAllListeners("end");
      next.end().catch(() => undefined);
      schedule(1000);
    };
    next.on("error", (error) => lost(error.message));
    next.on("end", () => lost("closed"));
    await next.connect();
    await next.query(`LISTEN ${SHARED_DOC_CHANNEL}`);
    client = next;
    if (isReconnect) handlers?.onReconnect();
  }

  function schedule(delay: number): void {
    if (stopped || retry) return;
    retry = setTimeout(() => {
      retry = null;
      connect(true).catch((error: unknown) => {
        logger.warn(`notification connection failed: ${error instanceof Error ? error.message : String(error)}`);
        schedule(Math.min(delay * 2, 15_000));
      });
    }, delay);
  }

  return {
    async start(nextHandlers) {
      handlers = nextHandlers;
      stopped = false;
      await connect(false);
    },
    async stop() {
      stopped = true;
      if (retry) clearTimeout(retry);
      const current = client;
      client = null;
      await current?.end().catch(() => undefined);
    },
  };
}
