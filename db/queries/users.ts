import "server-only";
import { eq } from "drizzle-orm";
import { db, type Executor } from "../client";
import { users, type User } from "../schema";

export function normaliseEmail(email: string): string {
  return email.trim().toLowerCase();
}

export async function getUserByEmail({ email }: { email: string }, executor: Executor = db): Promise<User | null> {
  const [user] = await executor
    .select()
    .from(users)
    .where(eq(users.email, normaliseEmail(email)))
    .limit(1);
  return user ?? null;
}

export async function getUserById({ id }: { id: string }, executor: Executor = db): Promise<User | null> {
  const [user] = await executor.select().from(users).where(eq(users.id, id)).limit(1);
  return user ?? null;
}

/** Inserts a user; returns null when the e-mail is already registered. */
export async function createUser(
  { email, name, passwordHash }: { email: string; name: string; passwordHash: string },
  executor: Executor = db,
): Promise<User | null> {
  const [user] = await executor
    .insert(users)
    .values({ email: normaliseEmail(email), name: name.trim(), passwordHash })
    .onConflictDoNothing({ target: users.email })
    .returning();
  return user ?? null;
}

export async function updateUserPasswordById({ id, passwordHash }: { id: string; passwordHash: string }, executor: Executor = db): Promise<void> {
  await executor.update(users).set({ passwordHash, updatedAt: new Date() }).where(eq(users.id, id));
}
