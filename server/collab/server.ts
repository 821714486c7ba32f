/**
 * The collaboration server: an HTTP server on loopback whose websocket
 * upgrades under `/collab/<derivationId>` are shared-document connections
 * (y-websocket's protocol). Auth, persistence, the JSON copy and update
 * notifications are injected (types.ts).
 *
 * A connection is accepted, then authenticated before any document byte is
 * sent or read: a refused one is closed with a 44xx code (refusing the upgrade
 * with an HTTP status would not reach the page). Each connection has a message
 * size and rate limit; a malformed message closes that connection only.
 */
import { createServer, type IncomingMessage as HttpRequest, type Server } from "node:http";
import { BlockList, isIP, type AddressInfo } from "node:net";
import type { Duplex } from "node:stream";
import { WebSocketServer, type RawData, type WebSocket } from "ws";
import { clientAddress } from "@/lib/client-address";
import { MalformedMessage, readClientMessage } from "./protocol";
import { Room, type RoomConnection } from "./room";
import { consoleLogger } from "./setup";
import {
  CloseCode,
  RefusedConnection,
  type Authenticator,
  type CollabLimits,
  type CollabPersistence,
  type ConnectionGrant,
  type JsonCopyWriter,
  type Logger,
  type UpdateNotifications,
} from "./types";

export const COLLAB_PATH = "/collab";
const PING_INTERVAL_MS = 30_000;
/** The close reason when a person's new role no longer lets them edit (at most 123 bytes). */
export const ROLE_NO_LONGER_EDITS = "Your role in this team changed and no longer lets you edit; reload to read it.";
/** Messages a connection may send while it is being authenticated (the provider sends two). */
const MAX_EARLY_MESSAGES = 32;

export interface CollabServerOptions {
  auth: Authenticator;
  persistence: CollabPersistence;
  jsonCopy: JsonCopyWriter;
  notifications?: UpdateNotifications;
  limits: CollabLimits;
  logger?: Logger;
}

export interface CollabServer {
  listen(port: number, host?: string): Promise<number>;
  /** Closes every connection (1001), writes and compacts every document, stops listening. */
  close(): Promise<void>;
  /** This instance's id in announcements to the other collaboration servers (null without notifications). */
  readonly instanceId: string | null;
  /** Loaded documents by derivation id (for tests and statistics). */
  readonly rooms: ReadonlyMap<string, Room>;
  readonly httpServer: Server;
}

/** A token bucket: `rate` messages per second, bursts of up to three seconds' worth. */
class RateLimiter {
  private tokens: number;
  private last = Date.now();
  constructor(private readonly rate: number) {
    this.tokens = rate * 3;
  }
  take(): boolean {
    const now = Date.now();
    this.tokens = Math.min(this.rate * 3, this.tokens + ((now - this.last) / 1000) * this.rate);
    this.last = now;
    if (this.tokens < 1) return false;
    this.tokens -= 1;
    return true;
  }
}

function toBytes(data: RawData): Uint8Array {
  if (Array.isArray(data)) return new Uint8Array(Buffer.concat(data));
  if (data instanceof ArrayBuffer) return new Uint8Array(data);
  return new Uint8Array(data.buffer, data.byteOffset, data.byteLength);
}

function sizeOf(data: RawData): number {
  if (Array.isArray(data)) return data.reduce((sum, part) => sum + part.byteLength, 0);
  return data.byteLength;
}

/**
 * Peers whose `X-Forwarded-For` is believed: a proxy or load balancer on this
 * host or the private network. Anyone else is counted by the socket's own address.
 */
const PROXY_NETWORKS = new BlockList();
PROXY_NETWORKS.addSubnet("127.0.0.0", 8, "ipv4");
PROXY_NETWORKS.addSubnet("10.0.0.0", 8, "ipv4");
PROXY_NETWORKS.addSubnet("172.16.0.0", 12, "ipv4");
PROXY_NETWORKS.addSubnet("192.168.0.0", 16, "ipv4");
PROXY_NETWORKS.addAddress("::1", "ipv6");
PROXY_NETWORKS.addSubnet("fc00::", 7, "ipv6");

/**
 * The client's address for the per-address connection limit: behind a proxy
 * (see PROXY_NETWORKS) what its headers say (the right-most `X-Forwarded-For`
 * entry, as the app counts requests), else the socket's own address.
 */
export function connectionAddress(request: Pick<HttpRequest, "headers" | "socket">): string | null {
  const peer = request.socket.remoteAddress ?? null;
  if (peer === null) return null;
  const plain = peer.startsWith("::ffff:") && peer.includes(".") ? peer.slice("::ffff:".length) : peer;
  const family = isIP(plain);
  if (family === 0 || !PROXY_NETWORKS.check(plain, family === 6 ? "ipv6" : "ipv4")) return plain;
  const forwarded = clientAddress(request.headers);
  return forwarded !== null && isIP(forwarded) !== 0 ? forwarded : plain;
}

/** A close reason fits in 123 bytes of UTF-8. */
function closeReason(reason: string): string {
  let text = reason;
  while (Buffer.byteLength(text) > 123) text = text.slice(0, -1);
  return text;
}

class Connection implements RoomConnection {
  grant!: ConnectionGrant;
  room: Room | null = null;
  closed = false;

  constructor(private readonly socket: WebSocket) {}

  send(data: Uint8Array): void {
    if (this.closed || this.socket.readyState !== this.socket.OPEN) return;
    this.socket.send(data, (error) => {
      if (error) this.close(CloseCode.serverError, "send failed");
    });
  }

  close(code: number, reason: string): void {
    if (this.closed) return;
    this.closed = true;
    try {
      this.socket.close(code, closeReason(reason));
    } catch {
      this.socket.terminate();
    }
    // A peer that never answers the close handshake is dropped.
    setTimeout(() => this.socket.terminate(), 5000).unref();
  }
}

export function createCollabServer(options: CollabServerOptions): CollabServer {
  const logger = options.logger ?? consoleLogger;
  const { limits } = options;
  const rooms = new Map<string, Room>();
  const loading = new Map<string, Promise<Room>>();
  /** Rooms being loaded: an announcement arriving meanwhile makes them read everything once loaded. */
  const loadingRooms = new Map<string, Room>();
  const sockets = new Set<WebSocket>();
  let closing = false;

  const httpServer = createServer((request, response) => {
    const path = new URL(request.url ?? "/", "http://collab").pathname;
    if (path === `${COLLAB_PATH}/health`) {
      let connections = 0;
      for (const room of rooms.values()) connections += room.connections.size;
      response.writeHead(200, { "content-type": "application/json", "cache-control": "no-store" });
      response.end(
        JSON.stringify({
          ok: !closing,
          instance: options.notifications?.instanceId ?? null,
          documents: rooms.size,
          connections,
          rssMb: Math.round(process.memoryUsage().rss / 1e6),
          cpuMs: Math.round((process.cpuUsage().user + process.cpuUsage().system) / 1000),
        }),
      );
      return;
    }
    response.writeHead(404, { "content-type": "text/plain" });
    response.end("Not found");
  });
  // Messages up to the limit are read; larger ones up to this ceiling are read and refused
  // with 4413, anything larger still is cut off by ws itself (1009).
  const wss = new WebSocketServer({ noServer: true, maxPayload: Math.max(limits.maxMessageBytes * 2, limits.maxMessageBytes + 65_536) });

  async function roomFor(derivationId: string): Promise<Room> {
    for (;;) {
      const existing = rooms.get(derivationId);
      if (existing && !existing.isUnloading) return existing;
      if (existing) {
        await existing.unload();
        continue;
      }
      const pending = loading.get(derivationId);
      if (pending) return pending;
      const room = new Room(derivationId, {
        persistence: options.persistence,
        jsonCopy: options.jsonCopy,
        limits,
        logger,
        peers: options.notifications,
        onUnloaded: (unloaded) => {
          if (rooms.get(derivationId) === unloaded) rooms.delete(derivationId);
        },
      });
      const load = (async () => {
        const result = await room.load();
        if (!result.ok) {
          room.awareness.destroy();
          room.doc.destroy();
          throw new RefusedConnection(result.code, result.reason);
        }
        rooms.set(derivationId, room);
        return room;
      })();
      loading.set(derivationId, load);
      loadingRooms.set(derivationId, room);
      try {
        return await load;
      } finally {
        loading.delete(derivationId);
        loadingRooms.delete(derivationId);
      }
    }
  }

  function accept(socket: WebSocket, request: HttpRequest): void {
    sockets.add(socket);
    const connection = new Connection(socket);
    const url = new URL(request.url ?? "/", "http://collab");
    const roomName = decodeURIComponent(url.pathname.slice(COLLAB_PATH.length + 1));
    const token = url.searchParams.get("token");
    const rate = new RateLimiter(limits.maxMessagesPerSecond);
    const early: Uint8Array[] = [];
    let alive = true;

    const onMessage = (data: Uint8Array) => {
      const room = connection.room;
      if (!room) return;
      try {
        room.handle(connection, readClientMessage(data));
      } catch (error) {
        if (error instanceof MalformedMessage) connection.close(CloseCode.malformed, `Malformed message: ${error.message}`);
        else {
          logger.error(`message handling failed in ${room.derivationId}`, error);
          connection.close(CloseCode.serverError, "Server error");
        }
      }
    };

    socket.on("message", (data: RawData) => {
      if (connection.closed) return;
      if (sizeOf(data) > limits.maxMessageBytes) {
        connection.close(CloseCode.tooLarge, `Message over ${limits.maxMessageBytes} bytes`);
        return;
      }
      if (!rate.take()) {
        connection.close(CloseCode.tooMany, "Too many messages");
        return;
      }
      const bytes = toBytes(data);
      if (connection.room) onMessage(bytes);
      else if (early.length < MAX_EARLY_MESSAGES) early.push(bytes);
      else connection.close(CloseCode.tooMany, "Too many messages before authentication");
    });
    socket.on("pong", () => {
      alive = true;
    });
    const ping = setInterval(() => {
      if (!alive) {
        socket.terminate();
        return;
      }
      alive = false;
      try {
        socket.ping();
      } catch {
        socket.terminate();
      }
    }, PING_INTERVAL_MS);
    socket.on("close", () => {
      clearInterval(ping);
      connection.closed = true;
      sockets.delete(socket);
      connection.room?.removeConnection(connection);
    });
    socket.on("error", (error) => logger.warn(`socket error: ${error.message}`));

    void (async () => {
      try {
        if (closing) throw new RefusedConnection(CloseCode.goingAway, "The server is shutting down");
        connection.grant = await options.auth.authenticate(token, roomName, connectionAddress(request));
        let room = await roomFor(connection.grant.derivationId);
        while (room.isUnloading) room = await roomFor(connection.grant.derivationId);
        if (connection.closed) return;
        connection.room = room;
        room.addConnection(connection);
        for (const message of early.splice(0)) onMessage(message);
      } catch (error) {
        if (error instanceof RefusedConnection) connection.close(error.code, error.reason);
        else {
          logger.error("accepting a connection failed", error);
          connection.close(CloseCode.serverError, "Server error");
        }
      }
    })();
  }

  httpServer.on("upgrade", (request: HttpRequest, socket: Duplex, head: Buffer) => {
    const path = new URL(request.url ?? "/", "http://collab").pathname;
    if (!path.startsWith(`${COLLAB_PATH}/`) || path.length <= COLLAB_PATH.length + 1) {
      socket.end("HTTP/1.1 404 Not Found\r\nConnection: close\r\n\r\n");
      return;
    }
    wss.handleUpgrade(request, socket, head, (ws) => accept(ws, request));
  });

  const notifications = options.notifications;

  /**
   * Rows other instances announced, by document, read together: one statement
   * on the listening connection for every loaded document at a time, so that
   * fan-out costs one read per round however many documents are busy.
   */
  const announced = new Map<string, Set<number>>();
  let readingAnnounced: Promise<void> | null = null;

  function onAnnounced(derivationId: string, rowId: number): void {
    const room = rooms.get(derivationId);
    if (notifications && room?.isLoaded && !room.isUnloading) {
      const ids = announced.get(derivationId) ?? new Set<number>();
      ids.add(rowId);
      announced.set(derivationId, ids);
      readingAnnounced ??= readAnnounced(notifications);
      return;
    }
    // Still loading: it rereads everything once loaded (an unloading room is dropped anyway).
    (room ?? loadingRooms.get(derivationId))?.announcedWhileLoading();
  }

  /**
   * Someone's membership changed: their connections are judged again. One
   * that may no longer read is closed with the refusal; one that could edit
   * and now may only read is closed with 4403 (the page reloads read-only).
   * A connection that gained rights keeps its grant until it reconnects.
   */
  async function rejudge(userId: string): Promise<void> {
    const regrant = options.auth.regrant;
    if (!regrant) return;
    for (const [derivationId, room] of rooms) {
      const theirs = [...room.connections.keys()].filter((connection) => connection.grant.userId === userId);
      if (theirs.length === 0) continue;
      let grant;
      try {
        grant = await regrant(userId, derivationId);
      } catch (error) {
        if (!(error instanceof RefusedConnection)) throw error;
        for (const connection of theirs) connection.close(error.code, error.reason);
        continue;
      }
      for (const connection of theirs) {
        if (!connection.grant.readOnly && grant.readOnly) connection.close(CloseCode.noAccess, ROLE_NO_LONGER_EDITS);
      }
    }
  }

  async function readAnnounced(peers: UpdateNotifications): Promise<void> {
    try {
      while (announced.size > 0) {
        const batch = new Map(announced);
        announced.clear();
        let rows;
        try {
          rows = await peers.readUpdates(Array.from(batch.values(), (ids) => Array.from(ids)).flat());
        } catch (error) {
          // Read each document's rows through the pool instead.
          logger.warn(`reading announced updates failed: ${error instanceof Error ? error.message : String(error)}`);
          for (const derivationId of batch.keys()) {
            rooms
              .get(derivationId)
              ?.resync()
              .catch((resyncError: unknown) => logger.error(`resync of ${derivationId} failed`, resyncError));
          }
          continue;
        }
        const byDocument = new Map<string, typeof rows>();
        for (const row of rows) byDocument.set(row.derivationId, [...(byDocument.get(row.derivationId) ?? []), row]);
        for (const [derivationId, ids] of batch) {
          const room = rooms.get(derivationId);
          if (!room) continue;
          const found = byDocument.get(derivationId) ?? [];
          // A row folded by a compaction meanwhile: read the document's rows as they now are.
          if (found.length < ids.size) room.resync().catch((error: unknown) => logger.error(`resync of ${derivationId} failed`, error));
          else room.applyStored(found);
        }
      }
    } finally {
      readingAnnounced = null;
    }
  }

  return {
    rooms,
    httpServer,
    instanceId: notifications?.instanceId ?? null,
    async listen(port, host = "127.0.0.1") {
      await notifications?.start({
        onUpdate: (derivationId, rowId) => onAnnounced(derivationId, rowId),
        onAwareness: (derivationId, update) => {
          const room = rooms.get(derivationId);
          if (!room) return;
          try {
            room.applyRemoteAwareness(update);
          } catch (error) {
            logger.warn(`presence from another instance for ${derivationId} does not read: ${error instanceof Error ? error.message : String(error)}`);
          }
        },
        onAwarenessQuery: (derivationId) => rooms.get(derivationId)?.sendLocalAwareness(),
        onReconnect: () => {
          for (const room of rooms.values()) room.resync().catch((error: unknown) => logger.error(`resync of ${room.derivationId} failed`, error));
        },
        onAccessChanged: (userId) => {
          rejudge(userId).catch((error: unknown) => logger.error(`judging the connections of ${userId} again failed`, error));
        },
      });
      await new Promise<void>((resolve, reject) => {
        httpServer.once("error", reject);
        httpServer.listen(port, host, () => {
          httpServer.off("error", reject);
          resolve();
        });
      });
      return (httpServer.address() as AddressInfo).port;
    },
    async close() {
      closing = true;
      for (const socket of sockets) socket.close(CloseCode.goingAway, "The server is shutting down");
      await Promise.allSettled(Array.from(loading.values()));
      await Promise.all(Array.from(rooms.values(), (room) => room.unload(true)));
      await notifications?.stop();
      for (const socket of sockets) socket.terminate();
      await new Promise<void>((resolve) => httpServer.close(() => resolve()));
      wss.close();
    },
  };
}
