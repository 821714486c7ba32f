import "server-only";
import { and, count, desc, eq, inArray, isNull } from "drizzle-orm";
import { db, type Executor } from "../client";
import { derivations, notifications, users, type Notification } from "../schema";

export interface NewNotification {
  userId: string;
  teamId: string | null;
  derivationId: string | null;
  actorId: string | null;
  kind: string;
  text: string;
}

export async function createNotifications(rows: NewNotification[], executor: Executor = db): Promise<void> {
  if (rows.length > 0) await executor.insert(notifications).values(rows);
}

export type NotificationRow = Notification & { actorName: string | null; derivationTitle: string | null };

export async function getNotificationsByUserId(
  { userId, limit = 50 }: { userId: string; limit?: number },
  executor: Executor = db,
): Promise<NotificationRow[]> {
  const rows = await executor
    .select({ notification: notifications, actorName: users.name, derivationTitle: derivations.title })
    .from(notifications)
    .leftJoin(users, eq(users.id, notifications.actorId))
    .leftJoin(derivations, eq(derivations.id, notifications.derivationId))
    .where(eq(notifications.userId, userId))
    .orderBy(desc(notifications.createdAt))
    .limit(limit);
  return rows.map(({ notification, actorName, derivationTitle }) => ({ ...notification, actorName, derivationTitle }));
}

export async function countUnreadNotificationsByUserId({ userId }: { userId: string }, executor: Executor = db): Promise<number> {
  const [row] = await executor
    .select({ unread: count() })
    .from(notifications)
    .where(and(eq(notifications.userId, userId), isNull(notifications.readAt)));
  return row?.unread ?? 0;
}

/** Marks the user's notifications read: the given ones, or all when `ids` is absent. */
export async function markNotificationsReadByUserId({ userId, ids }: { userId: string; ids?: string[] }, executor: Executor = db): Promise<void> {
  const now = new Date();
  const mine = and(eq(notifications.userId, userId), isNull(notifications.readAt));
  await executor
    .update(notifications)
    .set({ readAt: now, updatedAt: now })
    .where(ids ? and(mine, inArray(notifications.id, ids)) : mine);
}
