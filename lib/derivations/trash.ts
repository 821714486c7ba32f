import "server-only";
import { purgeTrashedDerivations } from "@/db/queries/derivations";
import { TRASH_RETENTION_DAYS } from "@/lib/domain";
import { deleteObject } from "@/lib/storage";

/**
 * The team trash. Deleting a derivation only marks it (`deletedAt`); it stays
 * restorable for TRASH_RETENTION_DAYS. Past that it counts as gone at once
 * (hidden from the trash list, not restorable), and its rows and stored
 * objects are removed for good on the next read of the team's trash or the
 * next deletion in the team: purging happens on read, with no scheduler.
 */

const DAY_MS = 86_400_000;

/** Derivations deleted at or before this moment have left the trash. */
export function trashCutoff(now: Date = new Date()): Date {
  return new Date(now.getTime() - TRASH_RETENTION_DAYS * DAY_MS);
}

/** When a derivation deleted at `deletedAt` leaves the trash for good. */
export function purgeDateOf(deletedAt: Date): Date {
  return new Date(deletedAt.getTime() + TRASH_RETENTION_DAYS * DAY_MS);
}

/** The rows are gone, so the objects are unreachable either way; a failed delete only leaves an orphan to log. */
async function removeObjects(keys: string[]): Promise<void> {
  for (const key of keys) {
    await deleteObject({ key }).catch((error) => console.error("[holonomy] could not delete a purged derivation's object:", key, error));
  }
}

/** Removes the team's derivations whose time in the trash has run out; returns how many. */
export async function purgeExpiredTrash({ teamId }: { teamId: string }): Promise<number> {
  const { purged, objectKeys } = await purgeTrashedDerivations({ teamId, deletedUpTo: trashCutoff(), actorId: null, reason: "expired" });
  await removeObjects(objectKeys);
  return purged.length;
}

/** Removes one trashed derivation for good, at a lead's request; false when it is not in the trash. */
export async function purgeFromTrash({ teamId, derivationId, actorId }: { teamId: string; derivationId: string; actorId: string }): Promise<boolean> {
  const { purged, objectKeys } = await purgeTrashedDerivations({ teamId, ids: [derivationId], actorId, reason: "requested" });
  await removeObjects(objectKeys);
  return purged.length > 0;
}
