import "server-only";
import { and, desc, eq, getTableColumns } from "drizzle-orm";
import { db, type Executor } from "../client";
import { simulationRuns, users, type NewSimulationRun, type SimulationRun } from "../schema";

/** A run without its trajectory (lists). */
export type SimulationRunSummary = Omit<SimulationRun, "trajectory"> & { createdByName: string | null };

const { trajectory: _trajectory, ...summaryColumns } = getTableColumns(simulationRuns);

export async function createSimulationRun({ run }: { run: NewSimulationRun & { id: string } }, executor: Executor = db): Promise<SimulationRun> {
  const [row] = await executor.insert(simulationRuns).values(run).returning();
  return row!;
}

export async function getSimulationRunsByDerivationId(
  { derivationId, limit = 50 }: { derivationId: string; limit?: number },
  executor: Executor = db,
): Promise<SimulationRunSummary[]> {
  const rows = await executor
    .select({ run: summaryColumns, createdByName: users.name })
    .from(simulationRuns)
    .leftJoin(users, eq(users.id, simulationRuns.createdById))
    .where(eq(simulationRuns.derivationId, derivationId))
    .orderBy(desc(simulationRuns.createdAt))
    .limit(limit);
  return rows.map((row) => ({ ...row.run, createdByName: row.createdByName }));
}

export async function getSimulationRunByIdAndDerivationId(
  { id, derivationId }: { id: string; derivationId: string },
  executor: Executor = db,
): Promise<(SimulationRun & { createdByName: string | null }) | null> {
  const [row] = await executor
    .select({ run: simulationRuns, createdByName: users.name })
    .from(simulationRuns)
    .leftJoin(users, eq(users.id, simulationRuns.createdById))
    .where(and(eq(simulationRuns.id, id), eq(simulationRuns.derivationId, derivationId)))
    .limit(1);
  return row ? { ...row.run, createdByName: row.createdByName } : null;
}
