import type { FunctionName } from "../expr/ast";
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
    (slot) => (slot.array === "t" ? "t" : `${slot.array}[${slot.index + 1}]`),
  );
  const temporaries = (fn: { temporaries: { name: string; code: string }[] }) => fn.temporaries.map((tmp) => `    ${tmp.name} = ${tmp.code}`).join("\n");
  const matrix = (outputs: string[], rows: number, cols: number) =>
    cols === 0 ? `zeros(${rows}, 0)` : `[\n${Array.from({ length: rows }, (_, i) => `        ${outputs.slice(i * cols, (i + 1) * cols).join(" ")}`).join(";\n")}\n    ]`;
  const { jacobians } = printed;
  const defaults = model.parameters.map((p) => (p.value === undefined ? "NaN" : doubleLiteral(p.value))).join(", ");
  const args = "q, qd, t, p=DEFAULT_PARAMS, u=Float64[]";
  // Matrix literals separate entries by spaces, so every entry is parenthesized: [a -b] would be two entries.
  const entries = (outputs: string[]) => outputs.map((o) => `(${o})`);

  return `${describeInterface(model, 1).map((line) => `# ${line}`).join("\n")}

const COORDINATES = [${model.coordinates.map((c) => JSON.stringify(c)).join(", ")}]
const INPUTS = String[${model.inputs.map((c) => JSON.stringify(c)).join(", ")}]
const PARAMETERS = String[${model.parameters.map((c) => JSON.stringify(c.name)).join(", ")}]
# Parameter defaults in the order of PARAMETERS (NaN where the model gives no value).
const DEFAULT_PARAMS = Float64[${defaults}]

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

"Jacobians of r = M qdd - f with respect to q, qd and u, at the given qdd."
function residual_jacobians(q, qd, qdd, t, p=DEFAULT_PARAMS, u=Float64[])
${temporaries(jacobians)}
    dr_dq = ${matrix(entries(jacobians.outputs.slice(0, n * n)), n, n)}
    dr_dqd = ${matrix(entries(jacobians.outputs.slice(n * n, 2 * n * n)), n, n)}
    dr_du = ${matrix(entries(jacobians.outputs.slice(2 * n * n)), n, m)}
    return dr_dq, dr_dqd, dr_du
end

"Accelerations qdd = M⁻¹ f."
accelerations(${args}) = mass_matrix(q, qd, t, p, u) \\ forcing(q, qd, t, p, u)

"State-space A (${2 * n}×${2 * n}) and B (${2 * n}×${m}) of dx/dt = [qd; M⁻¹ f] at (q, qd, t, u), x = [q; qd]."
function state_matrices(${args})
    M = mass_matrix(q, qd, t, p, u)
    qdd = M \\ forcing(q, qd, t, p, u)
    dr_dq, dr_dqd, dr_du = residual_jacobians(q, qd, qdd, t, p, u)
    A = zeros(${2 * n}, ${2 * n})
    for i in 1:${n}
        A[i, ${n} + i] = 1.0
    end
    A[${n + 1}:${2 * n}, 1:${n}] = -(M \\ dr_dq)
    A[${n + 1}:${2 * n}, ${n + 1}:${2 * n}] = -(M \\ dr_dqd)
    B = zeros(${2 * n}, ${m})
    if ${m} > 0
        B[${n + 1}:${2 * n}, :] = -(M \\ dr_du)
    end
    return A, B
end
`;
}
