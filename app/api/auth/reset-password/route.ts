import { resetPasswordByTokenHash } from "@/db/queries/password-resets";
import { apiRoute, readJson } from "@/lib/api/route";
import { hashPassword } from "@/lib/auth/password";
import { hashToken } from "@/lib/auth/tokens";
import { resetPasswordSchema } from "@/lib/validation/auth";
import { parseOrThrow } from "@/lib/validation/parse";

export const POST = apiRoute(async (request) => {
  const input = parseOrThrow(resetPasswordSchema, await readJson(request));
  await resetPasswordByTokenHash({ tokenHash: hashToken(input.token), passwordHash: await hashPassword(input.password) });
  return Response.json({ status: "reset" });
});
