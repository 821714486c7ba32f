import { createUser, getUserByEmail } from "@/db/queries/users";
import { apiRoute, readJson } from "@/lib/api/route";
import { hashPassword } from "@/lib/auth/password";
import { emailKey, enforceRateLimits, rateLimits } from "@/lib/auth/rate-limit";
import { clientAddress } from "@/lib/client-address";
import { absoluteUrl } from "@/lib/links";
import { composeLinkMail, sendMail } from "@/lib/mailer";
import { signUpSchema } from "@/lib/validation/auth";
import { parseOrThrow } from "@/lib/validation/parse";

/** The one answer to every sign-up that passes validation and the rate limits. */
const signUpAnswer = {
  status: "received",
  message: "Thanks. If this address is new, the account is ready; either way we sent a message to it.",
} as const;

/**
 * Creates an account, or, when the e-mail already has one, tells that account
 * by e-mail instead. Both paths hash the password and send one message, and
 * the answer is the same 202, so the form never reveals which e-mails are
 * registered. The client then signs in (and accepts an invitation as the
 * signed-in user). Limited per client address and per e-mail (429).
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
  const passwordHash = await hashPassword(input.password);
  const created = await createUser({ email: input.email, name: input.name, passwordHash });
  const existing = created ? null : await getUserByEmail({ email: input.email });
  const mail = created
    ? composeLinkMail({
        to: created.email,
        subject: "Your Holonomy account is ready",
        intro: `Welcome, ${created.name}. Your Holonomy account for ${created.email} is ready.`,
        linkLabel: "Sign in",
        link: absoluteUrl("/sign-in"),
        footnote: "If you did not create this account, reply to this message or ask your team lead to remove it.",
      })
    : composeLinkMail({
        to: existing?.email ?? input.email,
        subject: "Someone tried to create a Holonomy account with your address",
        intro: `Someone tried to create a new Holonomy account for ${existing?.email ?? input.email}, which already has one. If it was you, sign in, or reset your password if you have forgotten it. If you followed an invitation, sign in and open its link again.`,
        linkLabel: "Reset your password",
        link: absoluteUrl("/forgot-password"),
        footnote: "If it was not you, nothing has changed and you can ignore this message.",
      });
  // A delivery failure is logged by sendMail; it must not make the two paths answer differently.
  await sendMail(mail).catch(() => undefined);
  return Response.json(signUpAnswer, { status: 202 });
});
