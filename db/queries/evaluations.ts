import "server-only";
import { eq, sql } from "drizzle-orm";
import { db, type Executor } from "../client";
import type { EvaluationResult } from "@/lib/evaluation/evaluate";
import { evaluations, type Evaluation } from "../schema";

/** The cached evaluation for a model hash, counting the hit; null on a miss. */
export async function getEvaluationByModelHash({ modelHash }: { modelHash: string }, executor: Executor = db): Promise<Evaluation | null> {
  const [row] = await executor
    .update(evaluations)
    .set({ hitCount: sql`${evaluations.hitCount} + 1` })
    .where(eq(evaluations.modelHash, modelHash))
    .returning();
  return row ?? null;
}

/**
 * Stores an evaluation under its model hash. Two requests that evaluated the
 * same content at once both succeed; the later result replaces the earlier one.
 */
export async function upsertEvaluationByModelHash(
  { modelHash, engineVersion, result, timings }: { modelHash: string; engineVersion: string; result: EvaluationResult; timings: Record<string, number> },
  executor: Executor = db,
): Promise<Evaluation> {
  const [row] = await executor
    .insert(evaluations)
    .values({ modelHash, engineVersion, result, timings })
    .onConflictDoUpdate({ target: evaluations.modelHash, set: { engineVersion, result, timings, updatedAt: new Date() } })
    .returning();
  return row!;
}
