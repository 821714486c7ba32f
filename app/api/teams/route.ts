import { createTeamWithLead, getTeamsByUserId } from "@/db/queries/teams";
import { userRoute } from "@/lib/api/resource-route";
import { readJson } from "@/lib/api/route";
import { parseOrThrow } from "@/lib/validation/parse";
import { createTeamSchema } from "@/lib/validation/teams";

export const GET = userRoute(async ({ user }) => {
  return Response.json({ teams: await getTeamsByUserId({ userId: user.id }) });
});

/** Any signed-in user may start a team; they become its first lead. */
export const POST = userRoute(async ({ request, user }) => {
  const { name } = parseOrThrow(createTeamSchema, await readJson(request));
  const team = await createTeamWithLead({ name, leadUserId: user.id });
  return Response.json({ team }, { status: 201 });
});
