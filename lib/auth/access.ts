import "server-only";
import { getDerivationById, getTrashedDerivationById } from "@/db/queries/derivations";
import { getMembershipByTeamIdAndUserId, getTeamById } from "@/db/queries/teams";
import { NotFoundError } from "@/db/errors";
import type { Derivation, Membership, Team } from "@/db/schema";
import { notFound } from "next/navigation";
import { trashCutoff } from "@/lib/derivations/trash";
import { AppError, type ErrorSurface } from "@/lib/errors";
import { assertCan, type Action } from "./permissions";
import type { SessionUser } from "./session";

// Resolving a resource always goes through the caller's membership in the
// resource's team. Not being a member looks exactly like the resource not
// existing (404), so ids of other teams' resources reveal nothing.

export interface TeamAccess {
  team: Team;
  membership: Membership;
}

export const uuidPattern = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

/**
 * For ids that are not resolved through loadTeamFor / loadDerivationFor (e.g. a
 * member's user id): a malformed id names nothing, so it is a 404 like a missing one.
 */
export function idOrNotFound(id: string, surface: ErrorSurface, message: string): string {
  if (!uuidPattern.test(id)) throw new AppError(`not_found:${surface}`, message);
  return id;
}

export async function loadTeamFor(user: SessionUser, teamId: string, action: Action): Promise<TeamAccess> {
  if (!uuidPattern.test(teamId)) throw new AppError("not_found:team", "Team not found.");
  const membership = await getMembershipByTeamIdAndUserId({ teamId, userId: user.id });
  const team = membership ? await getTeamById({ id: teamId }) : null;
  if (!membership || !team) throw new AppError("not_found:team", "Team not found.");
  assertCan(membership.role, action);
  return { team, membership };
}

export interface DerivationAccess {
  derivation: Derivation & { ownerName: string | null };
  membership: Membership;
}

export async function loadDerivationFor(user: SessionUser, derivationId: string, action: Action): Promise<DerivationAccess> {
  if (!uuidPattern.test(derivationId)) throw new AppError("not_found:derivation", "Derivation not found.");
  const derivation = await getDerivationById({ id: derivationId });
  const membership = derivation ? await getMembershipByTeamIdAndUserId({ teamId: derivation.teamId, userId: user.id }) : null;
  if (!derivation || !membership) throw new AppError("not_found:derivation", "Derivation not found.");
  assertCan(membership.role, action, { status: derivation.status, locked: derivation.lockedAt !== null, isOwner: derivation.ownerId === user.id });
  return { derivation, membership };
}

/**
 * Like loadDerivationFor, for a derivation in the trash of team `teamId` (the
 * only place a trashed derivation can be named). Anything else, including a
 * live derivation or one whose time in the trash has run out, is a 404.
 */
export async function loadTrashedDerivationFor(user: SessionUser, teamId: string, derivationId: string, action: Action): Promise<DerivationAccess> {
  if (!uuidPattern.test(teamId) || !uuidPattern.test(derivationId)) throw new AppError("not_found:derivation", "Derivation not found in the trash.");
  const derivation = await getTrashedDerivationById({ id: derivationId, deletedAfter: trashCutoff() });
  const membership = derivation && derivation.teamId === teamId ? await getMembershipByTeamIdAndUserId({ teamId: derivation.teamId, userId: user.id }) : null;
  if (!derivation || !membership) throw new AppError("not_found:derivation", "Derivation not found in the trash.");
  assertCan(membership.role, action, { status: derivation.status, isOwner: derivation.ownerId === user.id });
  return { derivation, membership };
}

/**
 * For pages: runs a loader and turns "not found" (including "not your team")
 * and malformed ids into the 404 page. Other errors propagate to the error page.
 */
export async function orNotFound<T>(load: () => Promise<T>): Promise<T> {
  try {
    return await load();
  } catch (error) {
    if (error instanceof AppError && (error.kind === "not_found" || error.kind === "bad_request")) notFound();
    if (error instanceof NotFoundError) notFound();
    throw error;
  }
}
