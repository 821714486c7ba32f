import "server-only";
import { recordAuditEvent } from "@/db/queries/audit";
import { createApiToken, getApiTokenByHash, touchApiTokenById } from "@/db/queries/api-tokens";
import { getTeamById } from "@/db/queries/teams";
import type { ApiToken, Team } from "@/db/schema";
import { clientAddress } from "@/lib/client-address";
import { AppError } from "@/lib/errors";
import { countAgainst, isRateLimited, rateLimits } from "./rate-limit";
import { createToken, hashToken } from "./tokens";

/** Every token starts with this, so secret scanners and people can recognise one. */
export const API_TOKEN_PREFIX = "hol_";
/** Characters of the token kept in clear (with the prefix) to tell tokens apart in lists. */
const SHOWN_CHARACTERS = 8;

/** The characters of a token kept in clear, to tell tokens apart in lists and the audit log. */
export function apiTokenPrefix(secret: string): string {
  return secret.slice(0, API_TOKEN_PREFIX.length + SHOWN_CHARACTERS);
}

/** Creates a token for the team; the returned `secret` is shown once and never stored. */
export async function issueApiToken({
  teamId,
  name,
  createdById,
  expiresInDays,
}: {
  teamId: string;
  name: string;
  createdById: string;
  expiresInDays: number | null;
}): Promise<{ token: ApiToken; secret: string }> {
  const { token: random } = createToken();
  const secret = `${API_TOKEN_PREFIX}${random}`;
  const expiresAt = expiresInDays === null ? null : new Date(Date.now() + expiresInDays * 24 * 3600 * 1000);
  const token = await createApiToken({
    teamId,
    name,
    tokenHash: hashToken(secret),
    prefix: apiTokenPrefix(secret),
    createdById,
    expiresAt,
  });
  return { token, secret };
}

export type ApiTokenState = "active" | "expired" | "revoked";

export function apiTokenState(token: Pick<ApiToken, "revokedAt" | "expiresAt">, now = new Date()): ApiTokenState {
  if (token.revokedAt) return "revoked";
  if (token.expiresAt && token.expiresAt.getTime() <= now.getTime()) return "expired";
  return "active";
}

/** A token as lists show it: never its hash. */
export function apiTokenView(token: ApiToken) {
  return {
    id: token.id,
    name: token.name,
    prefix: token.prefix,
    scope: token.scope,
    state: apiTokenState(token),
    createdAt: token.createdAt.toISOString(),
    expiresAt: token.expiresAt?.toISOString() ?? null,
    revokedAt: token.revokedAt?.toISOString() ?? null,
    lastUsedAt: token.lastUsedAt?.toISOString() ?? null,
    lastUsedAddress: token.lastUsedAddress,
  };
}
export type ApiTokenView = ReturnType<typeof apiTokenView>;

export interface ApiCaller {
  token: ApiToken;
  team: Team;
}

const BEARER = /^Bearer\s+(\S+)\s*$/i;

/**
 * The team a public-API request acts for, from `Authorization: Bearer <token>`.
 * A missing, unknown (tampered), expired or revoked token is a 401 JSON error;
 * too many failures from one address, or too many requests on one token, a 429.
 * Each accepted request is audited against the token's team.
 */
export async function requireApiToken(request: Request): Promise<ApiCaller> {
  const address = clientAddress(request.headers);
  if (address !== null && (await isRateLimited(rateLimits.apiTokenFailuresByAddress, address))) {
    throw new AppError("rate_limited:token", "Too many requests with invalid API tokens from this address. Wait a few minutes.");
  }
  const refuse = async (message: string): Promise<never> => {
    if (address !== null) await countAgainst(rateLimits.apiTokenFailuresByAddress, address);
    throw new AppError("unauthorized:token", message);
  };
  const match = BEARER.exec(request.headers.get("authorization") ?? "");
  if (!match?.[1]) return refuse("Send a team API token as `Authorization: Bearer <token>`.");
  const token = await getApiTokenByHash({ tokenHash: hashToken(match[1]) });
  if (!token) return refuse("This API token is not valid.");
  const state = apiTokenState(token);
  if (state === "revoked") return refuse("This API token was revoked. Ask a team lead for a new one.");
  if (state === "expired") return refuse(`This API token expired on ${token.expiresAt?.toISOString().slice(0, 10)}. Ask a team lead for a new one.`);
  if (await isRateLimited(rateLimits.apiRequestsByToken, token.id)) {
    throw new AppError("rate_limited:token", "This API token has made too many requests. Wait a few minutes.");
  }
  await countAgainst(rateLimits.apiRequestsByToken, token.id);
  const team = await getTeamById({ id: token.teamId });
  if (!team) return refuse("This API token is not valid.");
  await touchApiTokenById({ id: token.id, address });
  const url = new URL(request.url);
  await recordAuditEvent({
    teamId: team.id,
    actorId: null,
    action: "api.read",
    targetType: "api_token",
    targetId: token.id,
    details: { token: token.prefix, path: url.pathname, query: url.search.slice(0, 200) },
    address,
  });
  return { token, team };
}
