import { z } from "zod";
import { markNotificationsReadByUserId } from "@/db/queries/notifications";
import { apiRoute } from "@/lib/api/route";
import { readOptionalJson } from "@/lib/api/optional-json";
import { requireUser } from "@/lib/auth/session";
import { uuidField } from "@/lib/validation/fields";
import { parseOrThrow } from "@/lib/validation/parse";

const markReadSchema = z.object({ ids: z.array(uuidField).max(200).optional() });

/** Marks the given notifications (or all of them) read; only the caller's own are touched. */
export const POST = apiRoute(async (request) => {
  const user = await requireUser();
  const { ids } = parseOrThrow(markReadSchema, await readOptionalJson(request));
  await markNotificationsReadByUserId({ userId: user.id, ids });
  return new Response(null, { status: 204 });
});
