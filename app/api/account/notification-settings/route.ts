import { getNotificationSettingsByUserId, upsertNotificationSettingsByUserId } from "@/db/queries/comments";
import { userRoute } from "@/lib/api/resource-route";
import { readJson } from "@/lib/api/route";
import { notificationSettingsSchema } from "@/lib/validation/comments";
import { parseOrThrow } from "@/lib/validation/parse";

// A person's own notification choices (mention e-mails on or off), across all their teams.

export const GET = userRoute(async ({ user }) => Response.json({ settings: await getNotificationSettingsByUserId({ userId: user.id }) }));

export const PUT = userRoute(async ({ request, user }) => {
  const { mentionEmails } = parseOrThrow(notificationSettingsSchema, await readJson(request));
  return Response.json({ settings: await upsertNotificationSettingsByUserId({ userId: user.id, mentionEmails }) });
});
