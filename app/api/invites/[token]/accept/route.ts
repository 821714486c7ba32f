import { acceptInviteByTokenHash } from "@/db/queries/invites";
import { userRoute } from "@/lib/api/resource-route";
import { hashToken } from "@/lib/auth/tokens";

export const POST = userRoute<{ token: string }>(async ({ user, params: { token } }) => {
  const { membership } = await acceptInviteByTokenHash({ tokenHash: hashToken(token), userId: user.id, userEmail: user.email });
  return Response.json({ teamId: membership.teamId, role: membership.role });
});
