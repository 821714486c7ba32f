import { createTeamWithLead, getTeamsByUserId } from "@/db/queries/teams";
import { apiRoute, readJson } from "@/lib/api/route";
import { requireUser } from "@/lib/auth/session";
import { parseOrThrow } from "@/lib/validation/parse";
import { createTeamSchema } from "@/lib/validation/teams";

export const GET = apiRoute(async () => {
  const user = await requireUser();
  return Response.json({ teams: await getTeamsByUserId({ userId: user.id }) });
});

/** Any signed-in user may start a team; they become its first lead. */
export const POST = apiRoute(async (request) => {
  const user = await requireUser();
  const { name } = parseOrThrow(createTeamSchema, await readJson(request));
  const team = await createTeamWithLead({ name, leadUserId: user.id });
  return Response.json({ team }, { status: 201 });
});
