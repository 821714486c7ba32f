import { getViewPreferencesByUserIdAndDerivationId, upsertViewPreferencesByUserIdAndDerivationId } from "@/db/queries/view-preferences";
import { derivationRoute } from "@/lib/api/resource-route";
import { readJson } from "@/lib/api/route";
import { readViewPreferences } from "@/lib/notebook/view-preferences";
import { parseOrThrow } from "@/lib/validation/parse";
import { saveViewPreferencesSchema, validViewPreferencesOrThrow } from "./schema";

type Params = { id: string };

// A person's view of a derivation (equation form, equilibrium, code language,
// simulation settings tried) is theirs, not the document's: whoever may read the
// derivation may keep one, and keeping it changes nothing others see.

export const GET = derivationRoute<Params>("derivation:read", async ({ user, derivation: { id } }) => {
  const row = await getViewPreferencesByUserIdAndDerivationId({ userId: user.id, derivationId: id });
  return Response.json({ preferences: readViewPreferences(row?.preferences), updatedAt: row?.updatedAt.toISOString() ?? null });
});

export const PUT = derivationRoute<Params>("derivation:read", async ({ request, user, derivation: { id } }) => {
  const input = parseOrThrow(saveViewPreferencesSchema, await readJson(request));
  const preferences = validViewPreferencesOrThrow(input.preferences);
  const row = await upsertViewPreferencesByUserIdAndDerivationId({
    userId: user.id,
    derivationId: id,
    preferences,
  });
  return Response.json({ preferences, updatedAt: row.updatedAt.toISOString() });
});
