// Pre-computes the evaluations of the demo team's notebooks into the cache, so
// the demo opens them with results already there. Runs the engine's worker
// bundle, rebuilt first, so the cache key's engine version is the server's.
import { execFileSync } from "node:child_process";
import { getDerivationsByTeamId, getDerivationById } from "@/db/queries/derivations";
import { documentFromContent } from "@/lib/evaluation/document-content";
import { evaluateDocumentCached } from "@/lib/evaluation/service";
import { closeEnginePool } from "@/lib/workers/engine-pool";

export async function seedDemoEvaluations({ teamId, titles }: { teamId: string; titles: string[] }): Promise<string[]> {
  execFileSync("npm", ["run", "--silent", "build:workers"], { stdio: "inherit" });
  const lines: string[] = [];
  try {
    for (const summary of await getDerivationsByTeamId({ teamId })) {
      if (!titles.includes(summary.title)) continue;
      const derivation = await getDerivationById({ id: summary.id });
      if (!derivation) continue;
      const evaluation = await evaluateDocumentCached({ document: documentFromContent(derivation.content, derivation.title) });
      lines.push(`${derivation.title}: ${evaluation.cached ? "already cached" : `evaluated in ${evaluation.timings.totalMs?.toFixed(0)} ms`}`);
    }
  } finally {
    await closeEnginePool();
  }
  return lines;
}
