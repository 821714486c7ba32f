import "server-only";
/**
 * Connection tokens checked against the database: the token must be valid and
 * name this room's derivation; then the user's membership in the derivation's
 * team is read again and judged by the permission module, so a role changed or
 * removed since the token was issued counts.
 */
import { getDerivationById } from "@/db/queries/derivations";
import { getMembershipByTeamIdAndUserId } from "@/db/queries/teams";
import { getUserById } from "@/db/queries/users";
import { can } from "@/lib/auth/permissions";
import { CollabTokenError, verifyCollabToken } from "@/lib/collab/token";
import { CloseCode, RefusedConnection, type Authenticator, type ConnectionGrant } from "./types";

// (lib/auth/access.ts has the same pattern, but imports Next.js page helpers this process does without.)
const uuidPattern = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

/** Whether one more connection of this person, from this address, is allowed now (the app's rate limits). */
export type ConnectionAdmission = (who: {
  userId: string;
  address: string | null;
}) => Promise<{ allowed: true } | { allowed: false; retryAfterSeconds: number }>;

/** The grant of `userId` on the derivation `room` as the database has it now; throws `RefusedConnection`. */
async function grantFor(userId: string, room: string): Promise<ConnectionGrant> {
  if (!uuidPattern.test(room)) throw new RefusedConnection(CloseCode.noDerivation, "No such derivation.");
  const derivation = await getDerivationById({ id: room });
  if (!derivation) throw new RefusedConnection(CloseCode.noDerivation, "No such derivation.");
  const [user, membership] = await Promise.all([getUserById({ id: userId }), getMembershipByTeamIdAndUserId({ teamId: derivation.teamId, userId: userId })]);
  const resource = { status: derivation.status, locked: derivation.lockedAt !== null, isOwner: derivation.ownerId === userId };
  if (!user || !membership || !can(membership.role, "derivation:read", resource)) {
    throw new RefusedConnection(CloseCode.noAccess, "You do not have access to this derivation.");
  }
  return { userId: user.id, derivationId: derivation.id, readOnly: !can(membership.role, "derivation:edit", resource) };
}

export function createTokenAuthenticator({ secret, admit }: { secret: string; admit?: ConnectionAdmission }): Authenticator {
  return {
    regrant: grantFor,
    async authenticate(token: string | null, room: string, address: string | null = null): Promise<ConnectionGrant> {
      if (!token) throw new RefusedConnection(CloseCode.badToken, "No connection token.");
      let claims;
      try {
        claims = await verifyCollabToken(token, { secret });
      } catch (error) {
        if (error instanceof CollabTokenError) {
          throw new RefusedConnection(
            CloseCode.badToken,
            error.reason === "expired" ? "The connection token has expired." : "The connection token is not valid.",
          );
        }
        throw error;
      }
      if (claims.derivationId !== room) throw new RefusedConnection(CloseCode.badToken, "The connection token is for another derivation.");
      // Counted before any database read, so a flood of reconnects costs the server little.
      if (admit) {
        const decision = await admit({ userId: claims.userId, address });
        if (!decision.allowed) {
          throw new RefusedConnection(CloseCode.tooMany, `Too many connections in a short time. Try again in ${decision.retryAfterSeconds} s.`);
        }
      }
      return grantFor(claims.userId, room);
    },
  };
}
