// Runs the demo crane's tolerance study once, in this process's simulation pool,
// so the demo opens with a completed study (worst cases, sensitivity, envelope).
// Idempotent: a derivation that already has a completed study of the cell keeps it.
import { getDerivationById, getDerivationsByTeamId } from "@/db/queries/derivations";
import { getStudiesByDerivationIdAndCellId, getStudyById } from "@/db/queries/studies";
import { craneStudyCellId, craneStudyTitle } from "@/db/seed/demo";
import { runStudyBatch } from "@/lib/studies/batch";
import { recordStudy } from "@/lib/studies/service";
import { closeSimulationPool } from "@/lib/workers/simulation-pool";

export async function seedDemoStudy({ teamId, userId }: { teamId: string; userId: string }): Promise<string> {
  const summary = (await getDerivationsByTeamId({ teamId })).find((d) => d.title === craneStudyTitle);
  const derivation = summary ? await getDerivationById({ id: summary.id }) : null;
  if (!derivation) return `${craneStudyTitle}: not found, no study seeded`;
  const earlier = await getStudiesByDerivationIdAndCellId({ derivationId: derivation.id, cellId: craneStudyCellId });
  if (earlier.some((study) => study.state === "completed")) return `${craneStudyTitle}: tolerance study already there`;
  const started = Date.now();
  try {
    const study = await recordStudy({ derivation, userId, cellId: craneStudyCellId });
    await runStudyBatch({ studyId: study.id, from: 0, to: study.total });
    const done = await getStudyById({ id: study.id });
    return `${craneStudyTitle}: tolerance study ${done?.state} (${done?.done} runs, ${done?.failed} failed) in ${((Date.now() - started) / 1000).toFixed(1)} s`;
  } finally {
    await closeSimulationPool();
  }
}
