import { derivationRoute } from "@/lib/api/resource-route";
import { can } from "@/lib/auth/permissions";
import { presenceColour, signCollabToken } from "@/lib/collab/token";
import { env } from "@/lib/env";

type Params = { id: string };

/**
 * A short-lived token for the collaboration server, naming the caller and this
 * derivation. Anyone who may read the derivation gets one; `readOnly` says
 * whether the server will take the caller's edits (it decides again itself).
 */
export const POST = derivationRoute<Params>("derivation:read", async ({ user, derivation, membership }) => {
  const readOnly = !can(membership.role, "derivation:edit", { status: derivation.status, locked: derivation.lockedAt !== null });
  const { token, expiresAt } = await signCollabToken(
    { userId: user.id, derivationId: derivation.id },
    { secret: env.NEXTAUTH_SECRET, ttlSeconds: env.COLLAB_TOKEN_TTL_SECONDS },
  );
  return Response.json(
    {
      token,
      url: env.COLLAB_PUBLIC_URL,
      readOnly,
      expiresAt: expiresAt.toISOString(),
      user: { id: user.id, name: user.name, colour: presenceColour(user.id) },
    },
    { headers: { "cache-control": "no-store" } },
  );
});
