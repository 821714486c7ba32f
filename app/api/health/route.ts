import { pingDatabase } from "@/db/queries/health";
import { apiRoute } from "@/lib/api/route";

export const dynamic = "force-dynamic";

/** 200 when the app and its database answer; 503 JSON when PostgreSQL is down. */
export const GET = apiRoute(async () => {
  await pingDatabase();
  return Response.json({ status: "ok" });
});
