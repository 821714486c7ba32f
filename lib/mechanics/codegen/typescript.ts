import type { FunctionName } from "../expr/ast";
import { argumentOf } from "./names";
import { describeInterface, doubleLiteral, type PreparedModel } from "./prepare";

/** TypeScript: dependency-free functions over number arrays; A and B by Gaussian elimination. */
export function emitTypeScript(model: PreparedModel): string {
  const { n, m } = model;
  const printed = model.print(
    {
      number: doubleLiteral,
      call: (fn: FunctionName, arg) => `Math.${fn}(${arg})`,
      power: (base, exponent) => `Math.pow(${base}, ${exponent})`,
      temporary: (i) => `t${i}_`,
    },
    (slot) => (slot.array === "t" ? "t" : `${argumentOf(slot)}[${slot.index}]!`),
  );
  const temporaries = (fn: { temporaries: { name: string; code: string }[] }) => fn.temporaries.map((tmp) => `  const ${tmp.name} = ${tmp.code};`).join("\n");
  const matrix = (outputs: string[], rows: number, cols: number) =>
    `[\n${Array.from({ length: rows }, (_, i) => `    [${outputs.slice(i * cols, (i + 1) * cols).join(", ")}],`).join("\n")}\n  ]`;
  const { jacobians } = printed;
  const defaults = model.parameters.map((p) => (p.value === undefined ? "NaN" : doubleLiteral(p.value))).join(", ");
  const args =
    "coordinates: ArrayLike<number>, rates: ArrayLike<number>, t: number, parameters: ArrayLike<number> = DEFAULT_PARAMETERS, inputs: ArrayLike<number> = []";
  const call = "coordinates, rates, t, parameters, inputs";
  const used = "  void coordinates; void rates; void t; void parameters; void inputs;";

  return `${describeInterface(model, 0)
    .map((line) => `// ${line}`)
    .join("\n")}

export const COORDINATES = ${JSON.stringify(model.coordinates)} as const;
export const INPUTS = ${JSON.stringify(model.inputs)} as const;
export const PARAMETERS = ${JSON.stringify(model.parameters.map((p) => p.name))} as const;
/** Parameter defaults in the order of PARAMETERS (NaN where the model gives no value). */
export const DEFAULT_PARAMETERS: readonly number[] = [${defaults}];

/** Mass matrix M (${n}×${n}). */
export function massMatrix(${args}): number[][] {
${used}
${temporaries(printed.mass)}
  return ${matrix(printed.mass.outputs, n, n)};
}

/** Forcing f (${n}). */
export function forcing(${args}): number[] {
${used}
${temporaries(printed.forcing)}
  return [${printed.forcing.outputs.join(", ")}];
}

/** Jacobians of the residual r = M accelerations − f with respect to the coordinates, the rates and the inputs. */
export function residualJacobians(
  coordinates: ArrayLike<number>,
  rates: ArrayLike<number>,
  accelerations: ArrayLike<number>,
  t: number,
  parameters: ArrayLike<number> = DEFAULT_PARAMETERS,
  inputs: ArrayLike<number> = [],
): { byCoordinates: number[][]; byRates: number[][]; byInputs: number[][] } {
${used} void accelerations;
${temporaries(jacobians)}
  return {
    byCoordinates: ${matrix(jacobians.outputs.slice(0, n * n), n, n)},
    byRates: ${matrix(jacobians.outputs.slice(n * n, 2 * n * n), n, n)},
    byInputs: ${matrix(jacobians.outputs.slice(2 * n * n), n, m)},
  };
}

/** Solves A X = B (B with k columns) by Gaussian elimination with partial pivoting; throws if A is singular. */
function solve(a: number[][], b: number[][]): number[][] {
  const size = a.length;
  const lu = a.map((row) => [...row]);
  const x = b.map((row) => [...row]);
  for (let col = 0; col < size; col++) {
    let pivot = col;
    for (let i = col + 1; i < size; i++) if (Math.abs(lu[i]![col]!) > Math.abs(lu[pivot]![col]!)) pivot = i;
    if (!(Math.abs(lu[pivot]![col]!) > 0)) throw new Error("the mass matrix is singular");
    [lu[col], lu[pivot]] = [lu[pivot]!, lu[col]!];
    [x[col], x[pivot]] = [x[pivot]!, x[col]!];
    for (let i = col + 1; i < size; i++) {
      const factor = lu[i]![col]! / lu[col]![col]!;
      for (let j = col; j < size; j++) lu[i]![j]! -= factor * lu[col]![j]!;
      for (let j = 0; j < x[i]!.length; j++) x[i]![j]! -= factor * x[col]![j]!;
    }
  }
  for (let i = size - 1; i >= 0; i--) {
    for (let j = 0; j < x[i]!.length; j++) {
      let s = x[i]![j]!;
      for (let l = i + 1; l < size; l++) s -= lu[i]![l]! * x[l]![j]!;
      x[i]![j] = s / lu[i]![i]!;
    }
  }
  return x;
}

/** Accelerations M⁻¹ f. */
export function accelerations(${args}): number[] {
  return solve(massMatrix(${call}), forcing(${call}).map((v) => [v])).map((row) => row[0]!);
}

/** State-space A (${2 * n}×${2 * n}) and B (${2 * n}×${m}) of dx/dt = [rates; M⁻¹ f] at the given state, x = [coordinates; rates]. */
export function stateMatrices(${args}): { A: number[][]; B: number[][] } {
  const n = ${n};
  const m = ${m};
  const M = massMatrix(${call});
  const { byCoordinates, byRates, byInputs } = residualJacobians(coordinates, rates, accelerations(${call}), t, parameters, inputs);
  const x = solve(M, byCoordinates.map((row, i) => [...row, ...byRates[i]!, ...byInputs[i]!].map((v) => -v)));
  const A = Array.from({ length: 2 * n }, (_, i) => Array.from({ length: 2 * n }, (_, j) => (i < n ? (j === n + i ? 1 : 0) : x[i - n]![j]!)));
  const B = Array.from({ length: 2 * n }, (_, i) => Array.from({ length: m }, (_, k) => (i < n ? 0 : x[i - n]![2 * n + k]!)));
  return { A, B };
}
`;
}
