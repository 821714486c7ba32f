import { countUnreadNotificationsByUserId, getNotificationsByUserId } from "@/db/queries/notifications";
import { apiRoute } from "@/lib/api/route";
import { requireUser } from "@/lib/auth/session";

/** The signed-in person's notifications, newest first, with the unread count. */
export const GET = apiRoute(async () => {
  const user = await requireUser();
  const [notifications, unread] = await Promise.all([getNotificationsByUserId({ userId: user.id }), countUnreadNotificationsByUserId({ userId: user.id })]);
  return Response.json({ unread, notifications });
});
