import { getViewPreferencesByUserIdAndDerivationId, upsertViewPreferencesByUserIdAndDerivationId } from "@/db/queries/view-preferences";
import { apiRoute, readJson } from "@/lib/api/route";
import { loadDerivationFor } from "@/lib/auth/access";
import { requireUser } from "@/lib/auth/session";
import { readViewPreferences } from "@/lib/notebook/view-preferences";
import { parseOrThrow } from "@/lib/validation/parse";
import { derivationIdOf } from "../derivation-id";
import { saveViewPreferencesSchema, validViewPreferencesOrThrow } from "./schema";

type Params = { id: string };

// A person's view of a derivation (equation form, equilibrium, code language,
// simulation settings tried) is theirs, not the document's: whoever may read the
// derivation may keep one, and keeping it changes nothing others see.

export const GET = apiRoute<Params>(async (_request, { params }) => {
  const user = await requireUser();
  const id = await derivationIdOf(params);
  await loadDerivationFor(user, id, "derivation:read");
  const row = await getViewPreferencesByUserIdAndDerivationId({ userId: user.id, derivationId: id });
  return Response.json({ preferences: readViewPreferences(row?.preferences), updatedAt: row?.updatedAt.toISOString() ?? null });
});

export const PUT = apiRoute<Params>(async (request, { params }) => {
  const user = await requireUser();
  const id = await derivationIdOf(params);
  await loadDerivationFor(user, id, "derivation:read");
  const input = parseOrThrow(saveViewPreferencesSchema, await readJson(request));
  const preferences = validViewPreferencesOrThrow(input.preferences);
  const row = await upsertViewPreferencesByUserIdAndDerivationId({ userId: user.id, derivationId: id, preferences: preferences as unknown as Record<string, unknown> });
  return Response.json({ preferences, updatedAt: row.updatedAt.toISOString() });
});
