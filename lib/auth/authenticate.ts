import "server-only";
import { recordAuditEvent } from "@/db/queries/audit";
import { getUserByEmail } from "@/db/queries/users";
import type { User } from "@/db/schema";
import { isDatabaseUnavailable } from "@/lib/errors";
import { verifyAgainstDummy, verifyPassword } from "./password";
import { countAgainst, emailKey, isRateLimited, rateLimits } from "./rate-limit";

export type AuthenticationResult = { status: "ok"; user: User } | { status: "invalid" } | { status: "rate_limited" } | { status: "unavailable" };

/**
 * Checks an e-mail and password. Unknown e-mail and wrong password give the same
 * answer in the same time; too many recent failures for the e-mail address lock it
 * for the rest of the window, whatever the password, and so do too many failures
 * from one client address (`clientAddress`, null when unknown), whatever the e-mail.
 */
export async function authenticate({
  email,
  password,
  clientAddress = null,
}: {
  email: string;
  password: string;
  clientAddress?: string | null;
}): Promise<AuthenticationResult> {
  try {
    const limited =
      (await isRateLimited(rateLimits.signInFailuresByEmail, emailKey(email))) ||
      (clientAddress !== null && (await isRateLimited(rateLimits.signInFailuresByAddress, clientAddress)));
    const user = await getUserByEmail({ email });
    // Every attempt is audited against the account it named (none for an unknown e-mail).
    const audit = (action: string, reason?: string) =>
      recordAuditEvent({
        teamId: null,
        actorId: user?.id ?? null,
        action,
        targetType: "user",
        targetId: user?.id ?? null,
        details: reason ? { email, reason } : { email },
        address: clientAddress,
      });
    if (limited) {
      await audit("auth.sign_in_failed", "rate_limited");
      return { status: "rate_limited" };
    }
    const valid = user ? await verifyPassword(password, user.passwordHash) : await verifyAgainstDummy(password);
    if (!valid) {
      await countAgainst(rateLimits.signInFailuresByEmail, emailKey(email));
      if (clientAddress !== null) await countAgainst(rateLimits.signInFailuresByAddress, clientAddress);
    }
    if (!valid || !user) {
      await audit("auth.sign_in_failed", "invalid_credentials");
      return { status: "invalid" };
    }
    await audit("auth.sign_in");
    return { status: "ok", user };
  } catch (error) {
    if (isDatabaseUnavailable(error)) {
      console.error("[holonomy] sign-in failed, database unavailable");
      return { status: "unavailable" };
    }
    throw error;
  }
}
