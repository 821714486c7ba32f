import "server-only";
import { and, desc, eq, isNull, lt, or } from "drizzle-orm";
import { db, type Executor } from "../client";
import { apiTokens, type ApiToken } from "../schema";
import { recordAuditEvent } from "./audit";
import { returnedRow } from "./returned-row";

/** Stores a new token (its hash) and audits its creation, in one transaction. */
export async function createApiToken({
  teamId,
  name,
  tokenHash,
  prefix,
  createdById,
  expiresAt,
}: {
  teamId: string;
  name: string;
  tokenHash: string;
  prefix: string;
  createdById: string;
  expiresAt: Date | null;
}): Promise<ApiToken> {
  return db.transaction(async (tx) => {
    const token = returnedRow(
      await tx.insert(apiTokens).values({ teamId, name: name.trim(), tokenHash, prefix, createdById, expiresAt }).returning(),
      "API token",
    );
    await recordAuditEvent(
      {
        teamId,
        actorId: createdById,
        action: "token.create",
        targetType: "api_token",
        targetId: token.id,
        details: { name: token.name, prefix, expiresAt: expiresAt?.toISOString() ?? null },
      },
      tx,
    );
    return token;
  });
}

export async function getApiTokensByTeamId({ teamId }: { teamId: string }, executor: Executor = db): Promise<ApiToken[]> {
  return executor.select().from(apiTokens).where(eq(apiTokens.teamId, teamId)).orderBy(desc(apiTokens.createdAt));
}

export async function getApiTokenByHash({ tokenHash }: { tokenHash: string }, executor: Executor = db): Promise<ApiToken | null> {
  const [token] = await executor.select().from(apiTokens).where(eq(apiTokens.tokenHash, tokenHash)).limit(1);
  return token ?? null;
}

/** Revokes a token of the team; null when the team has no such token. Revoking twice keeps the first time. */
export async function revokeApiTokenByTeamIdAndId({ teamId, id, actorId }: { teamId: string; id: string; actorId: string }): Promise<ApiToken | null> {
  return db.transaction(async (tx) => {
    const [token] = await tx
      .select()
      .from(apiTokens)
      .where(and(eq(apiTokens.teamId, teamId), eq(apiTokens.id, id)))
      .for("update")
      .limit(1);
    if (!token) return null;
    if (token.revokedAt) return token;
    const revoked = returnedRow(
      await tx.update(apiTokens).set({ revokedAt: new Date(), revokedById: actorId, updatedAt: new Date() }).where(eq(apiTokens.id, id)).returning(),
      "API token",
    );
    await recordAuditEvent(
      { teamId, actorId, action: "token.revoke", targetType: "api_token", targetId: id, details: { name: token.name, prefix: token.prefix } },
      tx,
    );
    return revoked;
  });
}

/**
 * Notes a use of the token. Written at most once a minute per token, so a build
 * that pulls in a loop does not turn every read into a write.
 */
export async function touchApiTokenById({ id, address }: { id: string; address: string | null }, executor: Executor = db): Promise<void> {
  const now = new Date();
  await executor
    .update(apiTokens)
    .set({ lastUsedAt: now, lastUsedAddress: address, updatedAt: now })
    .where(and(eq(apiTokens.id, id), or(isNull(apiTokens.lastUsedAt), lt(apiTokens.lastUsedAt, new Date(now.getTime() - 60_000)))));
}
