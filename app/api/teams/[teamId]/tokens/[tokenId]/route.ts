import { revokeApiTokenByTeamIdAndId } from "@/db/queries/api-tokens";
import { apiRoute } from "@/lib/api/route";
import { loadTeamFor, uuidPattern } from "@/lib/auth/access";
import { apiTokenView } from "@/lib/auth/api-tokens";
import { requireUser } from "@/lib/auth/session";
import { AppError } from "@/lib/errors";

/** Revokes a token at once; later requests with it get 401. */
export const DELETE = apiRoute<{ teamId: string; tokenId: string }>(async (_request, { params }) => {
  const user = await requireUser();
  const { teamId, tokenId } = await params;
  const { team } = await loadTeamFor(user, teamId, "team:manage-tokens");
  const token = uuidPattern.test(tokenId) ? await revokeApiTokenByTeamIdAndId({ teamId: team.id, id: tokenId, actorId: user.id }) : null;
  if (!token) throw new AppError("not_found:token", "No such API token in this team.");
  return Response.json({ token: apiTokenView(token) });
});
