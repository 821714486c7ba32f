import "server-only";
import { and, eq, gt, isNull } from "drizzle-orm";
import { db } from "../client";
import { ConflictError } from "../errors";
import { passwordResetTokens, users } from "../schema";
import { recordAuditEvent } from "./audit";

export async function createPasswordResetToken({ userId, tokenHash, expiresAt }: { userId: string; tokenHash: string; expiresAt: Date }): Promise<void> {
  await db.insert(passwordResetTokens).values({ userId, tokenHash, expiresAt });
}

/** True when the token exists, is unused and has not expired. */
export async function isPasswordResetTokenUsable({ tokenHash }: { tokenHash: string }): Promise<boolean> {
  const [row] = await db
    .select({ id: passwordResetTokens.id })
    .from(passwordResetTokens)
    .where(and(eq(passwordResetTokens.tokenHash, tokenHash), isNull(passwordResetTokens.usedAt), gt(passwordResetTokens.expiresAt, new Date())))
    .limit(1);
  return Boolean(row);
}

/** Uses the token once and sets the new password hash, in one transaction. */
export async function resetPasswordByTokenHash({ tokenHash, passwordHash }: { tokenHash: string; passwordHash: string }): Promise<{ userId: string }> {
  return db.transaction(async (tx) => {
    const [token] = await tx.select().from(passwordResetTokens).where(eq(passwordResetTokens.tokenHash, tokenHash)).for("update").limit(1);
    if (!token || token.usedAt || token.expiresAt.getTime() <= Date.now()) {
      throw new ConflictError("password_reset", "This reset link has expired or was already used. Ask for a new one.");
    }
    const now = new Date();
    await tx.update(passwordResetTokens).set({ usedAt: now, updatedAt: now }).where(eq(passwordResetTokens.id, token.id));
    await tx.update(users).set({ passwordHash, updatedAt: now }).where(eq(users.id, token.userId));
    await recordAuditEvent({ teamId: null, actorId: token.userId, action: "user.password_reset", targetType: "user", targetId: token.userId }, tx);
    return { userId: token.userId };
  });
}
