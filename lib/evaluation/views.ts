/**
 * What the evaluation routes answer (/api/derivations/[id]/evaluate and
 * /linearize): types only, shared by the routes and the notebook.
 */
import type { EvaluationResult } from "./evaluate";

export interface EvaluationResponse {
  cached: boolean;
  modelHash: string;
  engineVersion: string;
  result: EvaluationResult;
  /** Engine stages of the run that produced the result (ms). */
  timings: Record<string, number>;
  /** Time this request spent, cache look-up included (ms). */
  requestMs: number;
  evaluatedAt: string;
}

/** The linearization part of an evaluation, about the equilibrium and inputs asked for. */
export type LinearizationResponse = Pick<EvaluationResponse, "cached" | "modelHash" | "timings" | "requestMs"> & {
  linearization: EvaluationResult["linearization"] | null;
  equilibria: NonNullable<EvaluationResult["equilibria"]>;
  note?: string;
};
