/**
 * The evaluation service's engine runner without worker threads: each task
 * runs in this process from ENGINE_TASKS, with the payload structured-cloned
 * as the pool would. For unit and component tests of evaluateModel.
 */
import { demoDerivations } from "@/db/seed/demo";
import { evaluateModel, type EngineRunner, type EvaluationResult } from "@/lib/evaluation/evaluate";
import type { Model } from "@/lib/mechanics";
import { ENGINE_TASKS } from "@/lib/mechanics/worker";
import { documentToModel, type DerivationDocument } from "@/lib/notebook/document";

export const inProcessRunner: EngineRunner = {
  async run<T>(task: string, payload: unknown): Promise<T> {
    const run = ENGINE_TASKS[task];
    if (!run) throw new Error(`no engine task "${task}"`);
    return structuredClone(run(structuredClone(payload))) as T;
  },
};

/** A demo derivation's model, by the start of its title ("Gantry crane: trolley", "Camera gimbal", "Seat-suspension"). */
export function demoModel(titleStart: string): Model {
  const derivation = demoDerivations.find((d) => d.title.startsWith(titleStart));
  if (!derivation) throw new Error(`no demo derivation "${titleStart}"`);
  return documentToModel(derivation.content as unknown as DerivationDocument);
}

export async function evaluateDemo(titleStart: string, equilibriumIndex = 0, inputValues: Record<string, string> = {}): Promise<EvaluationResult> {
  const { result } = await evaluateModel(inProcessRunner, demoModel(titleStart), { linearization: { equilibriumIndex, inputValues }, codeLanguages: [] });
  return result;
}
