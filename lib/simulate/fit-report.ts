/**
 * A fit's result in plain sentences: how it ended, the residual per measured
 * coordinate with its unit, and for each parameter the data cannot determine,
 * which, why, and what data would determine it. Framework-free; the server
 * sends these with the numbers, so every client shows the same words.
 */
import type { FitResult, FitStatus, NotIdentifiable } from "./fit";

export interface FitReportContext {
  /** Unit of each measured coordinate (the model's unit: measured data are converted to it). */
  coordinateUnits: Readonly<Record<string, string>>;
  /** The model's inputs, and those that had a signal during the fit. */
  inputs?: readonly string[];
  appliedInputs?: readonly string[];
}

export interface FitReport {
  /** One sentence on how the fit ended. */
  outcome: string;
  /** False when the values are not a found optimum (nothing moved, or the fit was stopped early). */
  trustworthy: boolean;
  /** Residual RMS per measured coordinate, in its unit. */
  residuals: { coordinate: string; rms: number; unit: string; text: string }[];
  notIdentifiable: { parameters: string[]; why: string; remedy: string }[];
  /** Assumption behind the standard errors, shown once. */
  standardErrorNote: string;
}

/** "a", "a and b", "a, b and c". */
export function listOf(names: readonly string[]): string {
  if (names.length <= 1) return names.join("");
  return `${names.slice(0, -1).join(", ")} and ${names[names.length - 1]}`;
}

function formatRms(value: number): string {
  if (value === 0) return "0";
  const magnitude = Math.abs(value);
  return magnitude >= 1e-3 && magnitude < 1e4 ? String(Number(value.toPrecision(3))) : value.toExponential(2);
}

function outcomeOf(result: Pick<FitResult, "status" | "iterations" | "simulations" | "residualRms" | "notIdentifiable">): string {
  const iterations = `${result.iterations} iteration${result.iterations === 1 ? "" : "s"}`;
  const sentences: Record<FitStatus, string> = {
    converged: `Converged after ${iterations} (${result.simulations} simulations): no further step lowers the misfit.`,
    unchanged:
      result.residualRms === 0
        ? "Nothing moved: the starting values already reproduce the data exactly, so there was nothing to fit."
        : result.notIdentifiable.length > 0
          ? "Nothing moved: no step from the starting values lowered the misfit, because the data do not determine the chosen parameters (see below). The values shown are the starting values."
          : "Nothing moved: no step from the starting values lowered the misfit. The values shown are the starting values; try other starting values or bounds.",
    max_iterations: `Stopped at the iteration limit (${iterations}) while the misfit was still falling. The values are the best so far; fit again from them.`,
    time_limit: "Stopped at the time limit. The values are the best found so far and have no standard errors.",
    cancelled: "Cancelled. The values are the best found so far and have no standard errors.",
  };
  return sentences[result.status];
}

function relativeStep(step: number): string {
  // The direction is scaled so that its largest step is 1 %.
  const percent = Number(step.toPrecision(2));
  return `${percent >= 0 ? "+" : "−"}${Math.abs(percent)} %`;
}

function explainGroup(group: NotIdentifiable, result: Pick<FitResult, "recordMoves">, context: FitReportContext, measured: readonly string[]) {
  const names = listOf(group.parameters);
  const several = group.parameters.length > 1;
  const unused = (context.inputs ?? []).filter((u) => !(context.appliedInputs ?? []).includes(u));
  const withInput = unused.length > 0 ? `a record with a known input applied (${listOf(unused)})` : "a record with a known applied force or torque";
  if (group.kind === "no_effect") {
    if (!result.recordMoves) {
      return {
        parameters: group.parameters,
        why: `Nothing moves in the measured record (${listOf(measured)} ${measured.length > 1 ? "stay" : "stays"} constant), so ${names} ${several ? "have" : "has"} nothing to act on.`,
        remedy: `Use a record in which the system moves: released from a displaced position or with an initial rate, or ${withInput}.`,
      };
    }
    if (group.affectsUnmeasured.length > 0) {
      return {
        parameters: group.parameters,
        why: `Changing ${names} leaves the measured ${listOf(measured)} unchanged; ${several ? "they act" : "it acts"} on ${listOf(group.affectsUnmeasured)}, which ${group.affectsUnmeasured.length > 1 ? "are" : "is"} not in the file.`,
        remedy: `Measure ${listOf(group.affectsUnmeasured)} as well, or keep ${names} at ${several ? "known values" : "a known value"} (untick ${several ? "them" : "it"}).`,
      };
    }
    return {
      parameters: group.parameters,
      why: `Changing ${names} leaves the measured record unchanged: this record does not excite the motion ${several ? "they act" : "it acts"} on.`,
      remedy: `Use a record in which ${names} ${several ? "act" : "acts"}: motion of the coordinates ${several ? "they enter" : "it enters"}, a longer record, or ${withInput}.`,
    };
  }
  const steps = group.parameters.map((name) => `${name} ${relativeStep(group.direction[name]!)}`);
  return {
    parameters: group.parameters,
    why: `Changing ${listOf(steps)} together leaves the measured record unchanged, so the data fix only a combination of ${names}, not each of them.`,
    remedy: `Keep all but one of them at known values (untick the others), or add data in which they act differently: ${withInput}, or a further measured coordinate.`,
  };
}

/**
 * @example
 * explainFit(result, { coordinateUnits: { x: "m" } }).residuals[0]!.text // "x: 0.000512 m RMS"
 */
export function explainFit(
  result: Pick<FitResult, "status" | "iterations" | "simulations" | "residualRms" | "residualRmsByCoordinate" | "notIdentifiable" | "recordMoves">,
  context: FitReportContext,
): FitReport {
  const measured = Object.keys(result.residualRmsByCoordinate);
  const residuals = measured.map((coordinate) => {
    const rms = result.residualRmsByCoordinate[coordinate]!;
    const unit = context.coordinateUnits[coordinate] ?? "";
    return { coordinate, rms, unit, text: `${coordinate}: ${formatRms(rms)}${unit ? ` ${unit}` : " (no unit given)"} RMS` };
  });
  return {
    outcome: outcomeOf(result),
    trustworthy: result.status === "converged",
    residuals,
    notIdentifiable: result.notIdentifiable.map((group) => explainGroup(group, result, context, measured)),
    standardErrorNote:
      result.notIdentifiable.length > 0
        ? "Standard errors assume independent, equal-variance measurement noise, and hold the parameters that are not identifiable at their values."
        : "Standard errors assume independent, equal-variance measurement noise.",
  };
}
