import type { FunctionName } from "../expr/ast";
import { argumentOf } from "./names";
import { describeInterface, doubleLiteral, type PreparedModel } from "./prepare";

const NUMPY_FUNCTIONS: Record<FunctionName, string> = {
  sin: "np.sin",
  cos: "np.cos",
  tan: "np.tan",
  exp: "np.exp",
  log: "np.log",
  sqrt: "np.sqrt",
  abs: "np.abs",
  sinh: "np.sinh",
  cosh: "np.cosh",
  tanh: "np.tanh",
  asin: "np.arcsin",
  acos: "np.arccos",
  atan: "np.arctan",
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
    (slot) => (slot.array === "t" ? "t" : `${argumentOf(slot)}[${slot.index}]`),
  );
  const temporaries = (fn: { temporaries: { name: string; code: string }[] }) => fn.temporaries.map((tmp) => `    ${tmp.name} = ${tmp.code}`).join("\n");
  const matrix = (outputs: string[], rows: number, cols: number) =>
    cols === 0
      ? `np.zeros((${rows}, 0))`
      : `np.array([\n${Array.from({ length: rows }, (_, i) => `        [${outputs.slice(i * cols, (i + 1) * cols).join(", ")}],`).join("\n")}\n    ], dtype=float)`;
  const { jacobians } = printed;
  const defaults = model.parameters.map((p) => (p.value === undefined ? "np.nan" : doubleLiteral(p.value))).join(", ");
  const args = "coordinates, rates, t, parameters=DEFAULT_PARAMETERS, inputs=()";
  const call = "coordinates, rates, t, parameters, inputs";

  return `${describeInterface(model, 0)
    .map((line) => `# ${line}`)
    .join("\n")}
import numpy as np

COORDINATES = (${model.coordinates.map((c) => JSON.stringify(c)).join(", ")}${n === 1 ? "," : ""})
INPUTS = (${model.inputs.map((c) => JSON.stringify(c)).join(", ")}${m === 1 ? "," : ""})
PARAMETERS = (${model.parameters.map((c) => JSON.stringify(c.name)).join(", ")}${model.parameters.length === 1 ? "," : ""})
# Parameter defaults in the order of PARAMETERS (nan where the model gives no value).
DEFAULT_PARAMETERS = np.array([${defaults}], dtype=float)


def mass_matrix(${args}):
    """Mass matrix M (${n}x${n})."""
${temporaries(printed.mass)}
    return ${matrix(printed.mass.outputs, n, n)}


def forcing(${args}):
    """Forcing f (${n})."""
${temporaries(printed.forcing)}
    return np.array([${printed.forcing.outputs.join(", ")}], dtype=float)


def residual_jacobians(coordinates, rates, accelerations, t, parameters=DEFAULT_PARAMETERS, inputs=()):
    """Jacobians of the residual r = M accelerations - f with respect to the coordinates, the rates and the inputs."""
${temporaries(jacobians)}
    residual_by_coordinates = ${matrix(jacobians.outputs.slice(0, n * n), n, n)}
    residual_by_rates = ${matrix(jacobians.outputs.slice(n * n, 2 * n * n), n, n)}
    residual_by_inputs = ${matrix(jacobians.outputs.slice(2 * n * n), n, m)}
    return residual_by_coordinates, residual_by_rates, residual_by_inputs


def accelerations(${args}):
    """Accelerations M^-1 f."""
    return np.linalg.solve(mass_matrix(${call}), forcing(${call}))


def state_matrices(${args}):
    """State-space A (${2 * n}x${2 * n}) and B (${2 * n}x${m}) of dx/dt = [rates; M^-1 f] at the given state, x = [coordinates; rates]."""
    M = mass_matrix(${call})
    by_coordinates, by_rates, by_inputs = residual_jacobians(coordinates, rates, np.linalg.solve(M, forcing(${call})), t, parameters, inputs)
    A = np.zeros((${2 * n}, ${2 * n}))
    A[:${n}, ${n}:] = np.eye(${n})
    A[${n}:, :${n}] = -np.linalg.solve(M, by_coordinates)
    A[${n}:, ${n}:] = -np.linalg.solve(M, by_rates)
    B = np.zeros((${2 * n}, ${m}))
    if ${m} > 0:
        B[${n}:, :] = -np.linalg.solve(M, by_inputs)
    return A, B
`;
}
