import "server-only";
import { and, eq } from "drizzle-orm";
import { db, type Executor } from "../client";
import type { ViewPreferences } from "@/lib/notebook/view-preferences";
import { viewPreferences, type ViewPreferencesRow } from "../schema";

/** A person's stored view of a derivation; null when they have made no choice yet. */
export async function getViewPreferencesByUserIdAndDerivationId(
  { userId, derivationId }: { userId: string; derivationId: string },
  executor: Executor = db,
): Promise<ViewPreferencesRow | null> {
  const [row] = await executor
    .select()
    .from(viewPreferences)
    .where(and(eq(viewPreferences.userId, userId), eq(viewPreferences.derivationId, derivationId)))
    .limit(1);
  return row ?? null;
}

/** Stores a person's view of a derivation, replacing the earlier one. Touches nothing of the derivation. */
export async function upsertViewPreferencesByUserIdAndDerivationId(
  { userId, derivationId, preferences }: { userId: string; derivationId: string; preferences: ViewPreferences },
  executor: Executor = db,
): Promise<ViewPreferencesRow> {
  const [row] = await executor
    .insert(viewPreferences)
    .values({ userId, derivationId, preferences })
    .onConflictDoUpdate({ target: [viewPreferences.userId, viewPreferences.derivationId], set: { preferences, updatedAt: new Date() } })
    .returning();
  return row!;
}
