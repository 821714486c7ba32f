import { idOrNotFound } from "@/lib/auth/access";
import { derivationRoute } from "@/lib/api/resource-route";
import { readJson } from "@/lib/api/route";
import { replyToThread, setThreadStatus } from "@/lib/comments/service";
import { replySchema, threadStatusSchema } from "@/lib/validation/comments";
import { parseOrThrow } from "@/lib/validation/parse";

type Params = { id: string; threadId: string };

const threadIdOf = (params: Params) => idOrNotFound(params.threadId, "comment", "That comment thread is gone.");

/** A reply at the end of the thread. */
export const POST = derivationRoute<Params>("comment:create", async ({ request, params, user, derivation, membership }) => {
  const threadId = threadIdOf(params);
  const { body } = parseOrThrow(replySchema, await readJson(request));
  return Response.json({ thread: await replyToThread({ user, derivation, membership }, threadId, body) }, { status: 201 });
});

/** Resolve or reopen: the thread's author, editors and leads (the service asks with the authorship). */
export const PATCH = derivationRoute<Params>("comment:read", async ({ request, params, user, derivation, membership }) => {
  const threadId = threadIdOf(params);
  const { status } = parseOrThrow(threadStatusSchema, await readJson(request));
  return Response.json({ thread: await setThreadStatus({ user, derivation, membership }, threadId, status) });
});
