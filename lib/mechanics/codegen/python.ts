import type { FunctionName } from "../expr/ast";
import { describeInterface, doubleLiteral, type PreparedModel } from "./prepare";

const NUMPY_FUNCTIONS: Record<FunctionName, string> = {
  sin: "np.sin", cos: "np.cos", tan: "np.tan", exp: "np.exp", log: "np.log", sqrt: "np.sqrt", abs: "np.abs",
  sinh: "np.sinh", cosh: "np.cosh", tanh: "np.tanh", asin: "np.arcsin", acos: "np.arccos", atan: "np.arctan",
};

/** Python with NumPy: functions returning arrays; A and B by numpy.linalg.solve. */
export function emitPython(model: PreparedModel): string {
  const { n, m } = model;
  const printed = model.print(
    {
      number: doubleLiteral,
      call: (fn, arg) => `${NUMPY_FUNCTIONS[fn]}(${arg})`,
      power: (base, exponent) => `${base}**${exponent}`,
      temporary: (i) => `t${i}_`,
    },
    (slot) => (slot.array === "t" ? "t" : `${slot.array}[${slot.index}]`),
  );
  const temporaries = (fn: { temporaries: { name: string; code: string }[] }) => fn.temporaries.map((tmp) => `    ${tmp.name} = ${tmp.code}`).join("\n");
  const matrix = (outputs: string[], rows: number, cols: number) =>
    cols === 0 ? `np.zeros((${rows}, 0))` : `np.array([\n${Array.from({ length: rows }, (_, i) => `        [${outputs.slice(i * cols, (i + 1) * cols).join(", ")}],`).join("\n")}\n    ], dtype=float)`;
  const { jacobians } = printed;
  const defaults = model.parameters.map((p) => (p.value === undefined ? "np.nan" : doubleLiteral(p.value))).join(", ");
  const args = "q, qd, t, p=DEFAULT_PARAMS, u=()";

  return `${describeInterface(model, 0).map((line) => `# ${line}`).join("\n")}
import numpy as np

COORDINATES = (${model.coordinates.map((c) => JSON.stringify(c)).join(", ")}${n === 1 ? "," : ""})
INPUTS = (${model.inputs.map((c) => JSON.stringify(c)).join(", ")}${m === 1 ? "," : ""})
PARAMETERS = (${model.parameters.map((c) => JSON.stringify(c.name)).join(", ")}${model.parameters.length === 1 ? "," : ""})
# Parameter defaults in the order of PARAMETERS (nan where the model gives no value).
DEFAULT_PARAMS = np.array([${defaults}], dtype=float)


def mass_matrix(${args}):
    """Mass matrix M (${n}x${n})."""
${temporaries(printed.mass)}
    return ${matrix(printed.mass.outputs, n, n)}


def forcing(${args}):
    """Forcing f (${n})."""
${temporaries(printed.forcing)}
    return np.array([${printed.forcing.outputs.join(", ")}], dtype=float)


def residual_jacobians(q, qd, qdd, t, p=DEFAULT_PARAMS, u=()):
    """Jacobians of r = M qdd - f with respect to q, qd and u, at the given qdd."""
${temporaries(jacobians)}
    dr_dq = ${matrix(jacobians.outputs.slice(0, n * n), n, n)}
    dr_dqd = ${matrix(jacobians.outputs.slice(n * n, 2 * n * n), n, n)}
    dr_du = ${matrix(jacobians.outputs.slice(2 * n * n), n, m)}
    return dr_dq, dr_dqd, dr_du


def accelerations(${args}):
    """Accelerations qdd = M^-1 f."""
    return np.linalg.solve(mass_matrix(q, qd, t, p, u), forcing(q, qd, t, p, u))


def state_matrices(${args}):
    """State-space A (${2 * n}x${2 * n}) and B (${2 * n}x${m}) of dx/dt = [qd; M^-1 f] at (q, qd, t, u), x = [q; qd]."""
    M = mass_matrix(q, qd, t, p, u)
    qdd = np.linalg.solve(M, forcing(q, qd, t, p, u))
    dr_dq, dr_dqd, dr_du = residual_jacobians(q, qd, qdd, t, p, u)
    A = np.zeros((${2 * n}, ${2 * n}))
    A[:${n}, ${n}:] = np.eye(${n})
    A[${n}:, :${n}] = -np.linalg.solve(M, dr_dq)
    A[${n}:, ${n}:] = -np.linalg.solve(M, dr_dqd)
    B = np.zeros((${2 * n}, ${m}))
    if ${m} > 0:
        B[${n}:, :] = -np.linalg.solve(M, dr_du)
    return A, B
`;
}
