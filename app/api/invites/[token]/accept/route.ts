import { acceptInviteByTokenHash } from "@/db/queries/invites";
import { apiRoute } from "@/lib/api/route";
import { requireUser } from "@/lib/auth/session";
import { hashToken } from "@/lib/auth/tokens";

export const POST = apiRoute<{ token: string }>(async (_request, { params }) => {
  const user = await requireUser();
  const { token } = await params;
  const { membership } = await acceptInviteByTokenHash({ tokenHash: hashToken(token), userId: user.id, userEmail: user.email });
  return Response.json({ teamId: membership.teamId, role: membership.role });
});
