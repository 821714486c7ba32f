import { createPasswordResetToken } from "@/db/queries/password-resets";
import { getUserByEmail } from "@/db/queries/users";
import { apiRoute, readJson } from "@/lib/api/route";
import { emailKey, enforceRateLimits, rateLimits } from "@/lib/auth/rate-limit";
import { createToken } from "@/lib/auth/tokens";
import { clientAddress } from "@/lib/client-address";
import { env } from "@/lib/env";
import { absoluteUrl } from "@/lib/links";
import { composeLinkMail, sendMail } from "@/lib/mailer";
import { forgotPasswordSchema } from "@/lib/validation/auth";
import { parseOrThrow } from "@/lib/validation/parse";

/**
 * Always answers the same way, so the form does not reveal which e-mails have accounts.
 * Limited per client address and per e-mail (429), whether or not the account exists.
 */
export const POST = apiRoute(async (request) => {
  const { email } = parseOrThrow(forgotPasswordSchema, await readJson(request));
  await enforceRateLimits(
    [
      [rateLimits.passwordResetByAddress, clientAddress(request.headers)],
      [rateLimits.passwordResetByEmail, emailKey(email)],
    ],
    "rate_limited:password_reset",
  );
  const user = await getUserByEmail({ email });
  if (user) {
    const { token, tokenHash } = createToken();
    await createPasswordResetToken({
      userId: user.id,
      tokenHash,
      expiresAt: new Date(Date.now() + env.PASSWORD_RESET_TTL_MINUTES * 60_000),
    });
    await sendMail(
      composeLinkMail({
        to: user.email,
        subject: "Reset your Holonomy password",
        intro: `Someone asked to reset the password for ${user.email}. If it was you, choose a new password here.`,
        linkLabel: "Choose a new password",
        link: absoluteUrl(`/reset-password/${token}`),
        footnote: `The link works once and expires in ${env.PASSWORD_RESET_TTL_MINUTES} minutes. If you did not ask, ignore this message.`,
      }),
    );
  }
  return Response.json({ status: "sent", message: "If an account exists for that address, a reset link is on its way." });
});
