/**
 * How large a model is to evaluate, in the engine's own measures, read from
 * the model before any symbolic work: the coordinate count, the constraints,
 * the written terms of its expressions and the length of its text — the same
 * quantities lib/mechanics/limits.ts caps. A large model is evaluated by a
 * queue worker (an `evaluation` job) instead of on the request; a small one
 * keeps the request's fast path. Pure: no I/O.
 */
import { DEFAULT_MODEL_LIMITS, parseExpression, topLevelTerms, type Model } from "@/lib/mechanics";

export interface EvaluationSize {
  coordinates: number;
  /** Position and rate constraints (each adds a multiplier the closed form solves for). */
  constraints: number;
  /** Top-level terms of every written expression (energies, dissipation, forces, definitions, constraints, outputs). */
  writtenTerms: number;
  /** Characters of expression text, as the engine's `maxTotalTextLength` counts them. */
  textLength: number;
}

/** From which size on a model goes to the queue (any one measure reaching its mark is enough). */
export interface LargeEvaluationMarks {
  coordinates: number;
  constraints: number;
  writtenTerms: number;
  textLength: number;
}

/**
 * The marks. A third of the coordinate limit: the N-link chain derives in
 * well under a second up to the limit, but the equilibrium search, the
 * linearization and the code export grow with N: a whole evaluation of the
 * 10-link chain took about 6 s in one thread on the development machine
 * (derivation and equilibrium search about half each), past what a request
 * should hold a connection and an engine thread for.
 * A fifth of the text limit, and term and constraint counts past which the
 * algebra (products of sums, Cramer's rule for the multipliers) grows quickly.
 * The 5-link chain of `bench:notebook` (5 coordinates, 4 written terms) stays
 * on the fast path.
 */
export const LARGE_EVALUATION: LargeEvaluationMarks = {
  coordinates: Math.ceil(DEFAULT_MODEL_LIMITS.maxCoordinates / 3),
  constraints: 6,
  writtenTerms: 200,
  textLength: DEFAULT_MODEL_LIMITS.maxTotalTextLength / 5,
};

function termsOf(text: string | undefined): number {
  const trimmed = (text ?? "").trim();
  if (trimmed === "") return 0;
  try {
    return topLevelTerms(parseExpression(trimmed)).length;
  } catch {
    // A text that does not parse is refused by the fast path at once, with its column.
    return 0;
  }
}

/** The model's size in the measures above. */
export function evaluationSize(model: Model): EvaluationSize {
  const texts = [
    model.kinetic,
    model.potential,
    model.dissipation,
    ...Object.values(model.forces ?? {}),
    ...(model.definitions ?? []).map((d) => d.expr),
    ...(model.constraints ?? []).map((c) => c.expr),
    ...(model.rateConstraints ?? []).map((c) => c.expr),
    ...(model.outputs ?? []).map((o) => o.expr),
  ];
  return {
    coordinates: model.coordinates.length,
    constraints: (model.constraints?.length ?? 0) + (model.rateConstraints?.length ?? 0),
    writtenTerms: texts.reduce((sum, text) => sum + termsOf(text), 0),
    textLength: texts.reduce((sum, text) => sum + (text ?? "").length, 0),
  };
}

/**
 * True when the model is evaluated through the queue.
 *
 * @example isLargeEvaluation(evaluationSize(chainModel({ links: 12 }))) // true (12 coordinates)
 */
export function isLargeEvaluation(size: EvaluationSize, marks: LargeEvaluationMarks = LARGE_EVALUATION): boolean {
  return (
    size.coordinates >= marks.coordinates ||
    size.constraints >= marks.constraints ||
    size.writtenTerms >= marks.writtenTerms ||
    size.textLength >= marks.textLength
  );
}
