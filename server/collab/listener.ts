/**
 * LISTEN on `holonomy_doc`, `holonomy_presence` and `holonomy_access` over its own connection
 * (not from the pool: a pooled client would be handed back and lose the
 * LISTEN). Notifications sent while it is down are lost, so after every
 * reconnect the server resyncs its loaded documents from storage.
 *
 * The same connection sends this instance's presence to the others (small
 * NOTIFYs) and reads the rows other instances announced, in turn and without
 * taking a pool slot that stores updates; while it is down, presence is not
 * sent (clients renew it every 15 s) and rows are not read (the reconnect
 * rereads every document). Stored updates are announced by the append itself
 * (db/queries/collab.ts), never from here.
 */
import { randomBytes } from "node:crypto";
import { Client } from "pg";
import { NOTIFY_PAYLOAD_LIMIT, SHARED_ACCESS_CHANNEL, SHARED_DOC_CHANNEL, SHARED_PRESENCE_CHANNEL, readSharedDocUpdatesOn } from "@/db/queries/collab";
import type { Logger, NotificationHandlers, UpdateNotifications } from "./types";

const UUID = "[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}";
/** `<userId>`: that person's team membership changed. */
const ACCESS_PAYLOAD = new RegExp(`^(${UUID})$`, "i");
/** `<derivationId>:<rowId>` (a server-side write) or `<derivationId>:<rowId>:<instanceId>`. */
const UPDATE_PAYLOAD = new RegExp(`^(${UUID}):(\\d+)(?::([0-9a-z]{1,32}))?$`, "i");
/** `<derivationId>:<instanceId>:u:<base64>` or `<derivationId>:<instanceId>:q`. */
const PRESENCE_PAYLOAD = new RegExp(`^(${UUID}):([0-9a-z]{1,32}):(?:u:([A-Za-z0-9+/=]+)|(q))$`, "i");

/** A fresh id for one collaboration server process. */
export function newInstanceId(): string {
  return randomBytes(6).toString("hex");
}

/** The largest update whose base64 fits in a presence payload of `instanceId`. */
function maxPresenceBytes(instanceId: string): number {
  const header = `00000000-0000-0000-0000-000000000000:${instanceId}:u:`.length;
  return Math.floor((NOTIFY_PAYLOAD_LIMIT - header) / 4) * 3;
}

export function createPostgresNotifications({
  connectionString,
  logger,
  instanceId = newInstanceId(),
}: {
  connectionString: string;
  logger: Logger;
  instanceId?: string;
}): UpdateNotifications {
  let client: Client | null = null;
  let stopped = false;
  let retry: ReturnType<typeof setTimeout> | null = null;
  let handlers: NotificationHandlers | null = null;
  const maxAwarenessBytes = maxPresenceBytes(instanceId);

  function onNotification(channel: string, payload: string): void {
    if (!handlers) return;
    if (channel === SHARED_DOC_CHANNEL) {
      const match = UPDATE_PAYLOAD.exec(payload);
      if (!match) return;
      const from = match[3]?.toLowerCase() ?? null;
      if (from !== instanceId) handlers.onUpdate(match[1]!.toLowerCase(), Number(match[2]), from);
      return;
    }
    if (channel === SHARED_ACCESS_CHANNEL) {
      const match = ACCESS_PAYLOAD.exec(payload);
      if (match) handlers.onAccessChanged?.(match[1]!.toLowerCase());
      return;
    }
    if (channel === SHARED_PRESENCE_CHANNEL) {
      const match = PRESENCE_PAYLOAD.exec(payload);
      if (!match) return;
      const derivationId = match[1]!.toLowerCase();
      const from = match[2]!.toLowerCase();
      if (from === instanceId) return;
      if (match[4]) handlers.onAwarenessQuery(derivationId, from);
      else handlers.onAwareness(derivationId, new Uint8Array(Buffer.from(match[3]!, "base64")), from);
    }
  }

  async function connect(isReconnect: boolean): Promise<void> {
    const next = new Client({ connectionString, connectionTimeoutMillis: 3000, application_name: `holonomy-collab-${instanceId}` });
    next.on("notification", (message) => onNotification(message.channel, message.payload ?? ""));
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
    await next.query(`LISTEN ${SHARED_PRESENCE_CHANNEL}`);
    await next.query(`LISTEN ${SHARED_ACCESS_CHANNEL}`);
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

  /** Statements on the listening connection, one after another (pg runs one query at a time). */
  let queue: Promise<unknown> = Promise.resolve();

  function inTurn<T>(task: (connection: Client) => Promise<T>): Promise<T> {
    const current = client;
    if (!current) return Promise.reject(new Error("the notification connection is down"));
    const run = queue.then(() => task(current));
    queue = run.catch(() => undefined);
    return run;
  }

  function notify(channel: string, payload: string): boolean {
    if (!client) return false;
    inTurn((connection) => connection.query("select pg_notify($1, $2)", [channel, payload])).catch((error: unknown) =>
      logger.warn(`sending presence failed: ${error instanceof Error ? error.message : String(error)}`),
    );
    return true;
  }

  return {
    instanceId,
    maxAwarenessBytes,
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
    publishAwareness(derivationId, update) {
      if (update.byteLength > maxAwarenessBytes) return false;
      return notify(
        SHARED_PRESENCE_CHANNEL,
        `${derivationId}:${instanceId}:u:${Buffer.from(update.buffer, update.byteOffset, update.byteLength).toString("base64")}`,
      );
    },
    queryAwareness(derivationId) {
      notify(SHARED_PRESENCE_CHANNEL, `${derivationId}:${instanceId}:q`);
    },
    readUpdates(ids) {
      return inTurn((connection) => readSharedDocUpdatesOn(connection, ids));
    },
  };
}
