import { acceptInviteByTokenHash } from "@/db/queries/invites";
import { createUser } from "@/db/queries/users";
import { apiRoute, readJson } from "@/lib/api/route";
import { hashPassword } from "@/lib/auth/password";
import { emailKey, enforceRateLimits, rateLimits } from "@/lib/auth/rate-limit";
import { hashToken } from "@/lib/auth/tokens";
import { clientAddress } from "@/lib/client-address";
import { AppError, toAppError } from "@/lib/errors";
import { signUpSchema } from "@/lib/validation/auth";
import { parseOrThrow } from "@/lib/validation/parse";

/**
 * Creates an account. With an invite token, the new account joins the inviting
 * team straight away; the client signs in afterwards through next-auth.
 * Limited per client address and per e-mail (429).
 */
export const POST = apiRoute(async (request) => {
  const input = parseOrThrow(signUpSchema, await readJson(request));
  await enforceRateLimits(
    [
      [rateLimits.signUpByAddress, clientAddress(request.headers)],
      [rateLimits.signUpByEmail, emailKey(input.email)],
    ],
    "rate_limited:sign_up",
  );
  const user = await createUser({ email: input.email, name: input.name, passwordHash: await hashPassword(input.password) });
  if (!user) {
    throw new AppError("conflict:sign_up", "An account with this e-mail already exists.", {
      fieldErrors: { email: ["An account with this e-mail already exists. Sign in, or reset your password."] },
    });
  }
  let teamId: string | null = null;
  let inviteError: string | null = null;
  if (input.inviteToken) {
    try {
      const { membership } = await acceptInviteByTokenHash({ tokenHash: hashToken(input.inviteToken), userId: user.id, userEmail: user.email });
      teamId = membership.teamId;
    } catch (error) {
      inviteError = toAppError(error).message;
    }
  }
  return Response.json({ user: { id: user.id, email: user.email, name: user.name }, teamId, inviteError }, { status: 201 });
});
