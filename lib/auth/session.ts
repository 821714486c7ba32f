import "server-only";
import { getServerSession } from "next-auth";
import { redirect } from "next/navigation";
import { getUserById } from "@/db/queries/users";
import { AppError, toAppError } from "@/lib/errors";
import { authOptions } from "./options";

export interface SessionUser {
  id: string;
  email: string;
  name: string;
}

/**
 * The signed-in user for server components, route handlers and server actions,
 * or null. The user row is re-read so a deleted account loses access at once.
 */
export async function getSessionUser(): Promise<SessionUser | null> {
  const session = await getServerSession(authOptions);
  const id = session?.user?.id;
  if (!id) return null;
  // Every page and handler passes through here first, so an outage surfaces as
  // AppError("unavailable:database") (503 JSON, or the 503 page) right away.
  const user = await getUserById({ id }).catch((error: unknown) => {
    throw toAppError(error);
  });
  return user ? { id: user.id, email: user.email, name: user.name } : null;
}

/** For route handlers and server actions: the user, or AppError("unauthorized:session"). */
export async function requireUser(): Promise<SessionUser> {
  const user = await getSessionUser();
  if (!user) throw new AppError("unauthorized:session");
  return user;
}

/** For pages: the user, or a redirect to sign-in that comes back here afterwards. */
export async function requirePageUser(returnTo: string): Promise<SessionUser> {
  const user = await getSessionUser();
  if (!user) redirect(`/sign-in?callbackUrl=${encodeURIComponent(returnTo)}`);
  return user;
}
