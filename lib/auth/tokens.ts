import { createHash, randomBytes } from "node:crypto";

/** A URL-safe random token and the SHA-256 hash that is stored in its place. */
export function createToken(): { token: string; tokenHash: string } {
  const token = randomBytes(32).toString("base64url");
  return { token, tokenHash: hashToken(token) };
}

export function hashToken(token: string): string {
  return createHash("sha256").update(token).digest("hex");
}
