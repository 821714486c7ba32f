import { getSimulationRunByIdAndDerivationId } from "@/db/queries/runs";
import { AppError } from "@/lib/errors";
import { uuidField } from "@/lib/validation/fields";

/** The run, if it belongs to the derivation (checked by the caller's access first). */
export async function runOf(derivationId: string, params: Promise<{ runId: string }>) {
  const parsed = uuidField.safeParse((await params).runId);
  const run = parsed.success ? await getSimulationRunByIdAndDerivationId({ id: parsed.data, derivationId }) : null;
  if (!run) throw new AppError("not_found:simulation", "Run not found.");
  return run;
}
