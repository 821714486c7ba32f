import type { FunctionName } from "../expr/ast";
import { argumentOf } from "./names";
import { describeInterface, doubleLiteral, type PreparedModel } from "./prepare";

/** Julia: functions over vectors (1-based), A and B by the backslash solve. */
export function emitJulia(model: PreparedModel): string {
  const { n, m } = model;
  const printed = model.print(
    {
      number: doubleLiteral,
      call: (fn: FunctionName, arg) => `${fn}(${arg})`,
      power: (base, exponent) => `${base}^${exponent}`,
      temporary: (i) => `t${i}_`,
    },
    (slot) => (slot.array === "t" ? "t" : `${argumentOf(slot)}[${slot.index + 1}]`),
  );
  const temporaries = (fn: { temporaries: { name: string; code: string }[] }) => fn.temporaries.map((tmp) => `    ${tmp.name} = ${tmp.code}`).join("\n");
  const matrix = (outputs: string[], rows: number, cols: number) =>
    cols === 0
      ? `zeros(${rows}, 0)`
      : `[\n${Array.from({ length: rows }, (_, i) => `        ${outputs.slice(i * cols, (i + 1) * cols).join(" ")}`).join(";\n")}\n    ]`;
  const { jacobians } = printed;
  const defaults = model.parameters.map((p) => (p.value === undefined ? "NaN" : doubleLiteral(p.value))).join(", ");
  const args = "coordinates, rates, t, parameters=DEFAULT_PARAMETERS, inputs=Float64[]";
  const call = "coordinates, rates, t, parameters, inputs";
  // Matrix literals separate entries by spaces, so every entry is parenthesized: [a -b] would be two entries.
  const entries = (outputs: string[]) => outputs.map((o) => `(${o})`);

  return `${describeInterface(model, 1)
    .map((line) => `# ${line}`)
    .join("\n")}

const COORDINATES = [${model.coordinates.map((c) => JSON.stringify(c)).join(", ")}]
const INPUTS = String[${model.inputs.map((c) => JSON.stringify(c)).join(", ")}]
const PARAMETERS = String[${model.parameters.map((c) => JSON.stringify(c.name)).join(", ")}]
# Parameter defaults in the order of PARAMETERS (NaN where the model gives no value).
const DEFAULT_PARAMETERS = Float64[${defaults}]

"Mass matrix M (${n}×${n})."
function mass_matrix(${args})
${temporaries(printed.mass)}
    return ${matrix(entries(printed.mass.outputs), n, n)}
end

"Forcing f (${n})."
function forcing(${args})
${temporaries(printed.forcing)}
    return [${entries(printed.forcing.outputs).join(", ")}]
end

"Jacobians of the residual r = M accelerations - f with respect to the coordinates, the rates and the inputs."
function residual_jacobians(coordinates, rates, accelerations, t, parameters=DEFAULT_PARAMETERS, inputs=Float64[])
${temporaries(jacobians)}
    residual_by_coordinates = ${matrix(entries(jacobians.outputs.slice(0, n * n)), n, n)}
    residual_by_rates = ${matrix(entries(jacobians.outputs.slice(n * n, 2 * n * n)), n, n)}
    residual_by_inputs = ${matrix(entries(jacobians.outputs.slice(2 * n * n)), n, m)}
    return residual_by_coordinates, residual_by_rates, residual_by_inputs
end

"Accelerations M⁻¹ f."
accelerations(${args}) = mass_matrix(${call}) \\ forcing(${call})

"State-space A (${2 * n}×${2 * n}) and B (${2 * n}×${m}) of dx/dt = [rates; M⁻¹ f] at the given state, x = [coordinates; rates]."
function state_matrices(${args})
    M = mass_matrix(${call})
    by_coordinates, by_rates, by_inputs = residual_jacobians(coordinates, rates, M \\ forcing(${call}), t, parameters, inputs)
    A = zeros(${2 * n}, ${2 * n})
    for i in 1:${n}
        A[i, ${n} + i] = 1.0
    end
    A[${n + 1}:${2 * n}, 1:${n}] = -(M \\ by_coordinates)
    A[${n + 1}:${2 * n}, ${n + 1}:${2 * n}] = -(M \\ by_rates)
    B = zeros(${2 * n}, ${m})
    if ${m} > 0
        B[${n + 1}:${2 * n}, :] = -(M \\ by_inputs)
    end
    return A, B
end
`;
}
