import { createDerivation, getDerivationsByTeamId } from "@/db/queries/derivations";
import { apiRoute, readJson } from "@/lib/api/route";
import { loadTeamFor } from "@/lib/auth/access";
import { requireUser } from "@/lib/auth/session";
import { createDerivationSchema, listDerivationsQuerySchema } from "@/lib/validation/derivations";
import { uuidField } from "@/lib/validation/fields";
import { parseOrThrow } from "@/lib/validation/parse";

type Params = { teamId: string };

export const GET = apiRoute<Params>(async (request, { params }) => {
  const user = await requireUser();
  const teamId = parseOrThrow(uuidField, (await params).teamId);
  await loadTeamFor(user, teamId, "derivation:read");
  const query = Object.fromEntries(new URL(request.url).searchParams);
  const filters = parseOrThrow(listDerivationsQuerySchema, query);
  return Response.json({ derivations: await getDerivationsByTeamId({ teamId, ...filters }) });
});

export const POST = apiRoute<Params>(async (request, { params }) => {
  const user = await requireUser();
  const teamId = parseOrThrow(uuidField, (await params).teamId);
  await loadTeamFor(user, teamId, "derivation:create");
  const input = parseOrThrow(createDerivationSchema, await readJson(request));
  const derivation = await createDerivation({ teamId, title: input.title, ownerId: user.id, content: input.content });
  return Response.json({ derivation }, { status: 201 });
});
