/**
 * Connection tokens of the collaboration server: short-lived JWTs (HS256,
 * signed with a key derived from NEXTAUTH_SECRET) that name one user and one
 * derivation. The token route issues one from the session; the collaboration
 * server verifies it before it sends or accepts any document byte, then
 * re-checks the role in the database.
 */
import { createHmac } from "node:crypto";
import { SignJWT, errors as joseErrors, jwtVerify } from "jose";

const ISSUER = "holonomy";
const AUDIENCE = "holonomy-collab";

/** The signing key: the app secret put through HMAC with this use's name, so a token key is never a session key. */
export function collabTokenKey(secret: string): Uint8Array {
  return new Uint8Array(createHmac("sha256", secret).update("holonomy collaboration token v1").digest());
}

export interface CollabTokenClaims {
  userId: string;
  derivationId: string;
}

export async function signCollabToken(
  { userId, derivationId }: CollabTokenClaims,
  { secret, ttlSeconds, now = new Date() }: { secret: string; ttlSeconds: number; now?: Date },
): Promise<{ token: string; expiresAt: Date }> {
  const issuedAt = Math.floor(now.getTime() / 1000);
  const expiresAt = new Date((issuedAt + ttlSeconds) * 1000);
  const token = await new SignJWT({ drv: derivationId })
    .setProtectedHeader({ alg: "HS256" })
    .setIssuer(ISSUER)
    .setAudience(AUDIENCE)
    .setSubject(userId)
    .setIssuedAt(issuedAt)
    .setExpirationTime(issuedAt + ttlSeconds)
    .sign(collabTokenKey(secret));
  return { token, expiresAt };
}

/** Why a token was refused. */
export class CollabTokenError extends Error {
  constructor(
    readonly reason: "expired" | "invalid",
    message: string,
  ) {
    super(message);
    this.name = "CollabTokenError";
  }
}

/** The token's claims, or a `CollabTokenError` (expired, bad signature, wrong audience, malformed). */
export async function verifyCollabToken(token: string, { secret, now }: { secret: string; now?: Date }): Promise<CollabTokenClaims> {
  try {
    const { payload } = await jwtVerify(token, collabTokenKey(secret), {
      issuer: ISSUER,
      audience: AUDIENCE,
      algorithms: ["HS256"],
      ...(now ? { currentDate: now } : {}),
    });
    if (typeof payload.sub !== "string" || typeof payload.drv !== "string")
      throw new CollabTokenError("invalid", "The connection token names no user or derivation.");
    return { userId: payload.sub, derivationId: payload.drv };
  } catch (error) {
    if (error instanceof CollabTokenError) throw error;
    if (error instanceof joseErrors.JWTExpired) throw new CollabTokenError("expired", "The connection token has expired.");
    throw new CollabTokenError("invalid", "The connection token is not valid.");
  }
}

// Presence colours: readable on white as text and as a caret, distinct in a row of avatars.
const PRESENCE_COLOURS = ["#1f77b4", "#d62728", "#2ca02c", "#9467bd", "#8c564b", "#e377c2", "#17becf", "#bcbd22", "#ff7f0e", "#393b79"] as const;

/** A person's colour in presence (cursors, avatars): the same on every page and for every viewer. */
export function presenceColour(userId: string): string {
  let hash = 0;
  for (let i = 0; i < userId.length; i += 1) hash = (hash * 31 + userId.charCodeAt(i)) >>> 0;
  return PRESENCE_COLOURS[hash % PRESENCE_COLOURS.length]!;
}
