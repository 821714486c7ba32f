import "server-only";
import { and, count, eq, gt } from "drizzle-orm";
import { db, type Executor } from "../client";
import { signInAttempts } from "../schema";
import { normaliseEmail } from "./users";

export async function recordSignInAttempt({ email, succeeded }: { email: string; succeeded: boolean }, executor: Executor = db): Promise<void> {
  await executor.insert(signInAttempts).values({ email: normaliseEmail(email), succeeded });
}

/** Failed attempts for this e-mail since `since` (successes do not reset the count). */
export async function countSignInFailuresByEmail({ email, since }: { email: string; since: Date }, executor: Executor = db): Promise<number> {
  const [row] = await executor
    .select({ failures: count() })
    .from(signInAttempts)
    .where(and(eq(signInAttempts.email, normaliseEmail(email)), eq(signInAttempts.succeeded, false), gt(signInAttempts.createdAt, since)));
  return row?.failures ?? 0;
}
