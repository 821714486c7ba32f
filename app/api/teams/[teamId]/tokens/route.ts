import { getApiTokensByTeamId } from "@/db/queries/api-tokens";
import { apiRoute, readJson } from "@/lib/api/route";
import { loadTeamFor } from "@/lib/auth/access";
import { apiTokenView, issueApiToken } from "@/lib/auth/api-tokens";
import { requireUser } from "@/lib/auth/session";
import { parseOrThrow } from "@/lib/validation/parse";
import { createApiTokenSchema } from "@/lib/validation/teams";

/** The team's API tokens (never their values), for leads. */
export const GET = apiRoute<{ teamId: string }>(async (_request, { params }) => {
  const user = await requireUser();
  const { team } = await loadTeamFor(user, (await params).teamId, "team:manage-tokens");
  const tokens = await getApiTokensByTeamId({ teamId: team.id });
  return Response.json({ tokens: tokens.map(apiTokenView) });
});

/** Creates a read-only token; its value is in this answer and nowhere else, ever. */
export const POST = apiRoute<{ teamId: string }>(async (request, { params }) => {
  const user = await requireUser();
  const { team } = await loadTeamFor(user, (await params).teamId, "team:manage-tokens");
  const input = parseOrThrow(createApiTokenSchema, await readJson(request));
  const { token, secret } = await issueApiToken({ teamId: team.id, name: input.name, createdById: user.id, expiresInDays: input.expiresInDays });
  return Response.json({ token: apiTokenView(token), secret }, { status: 201, headers: { "cache-control": "no-store" } });
});
