import type { FunctionName } from "../expr/ast";
import { argumentOf } from "./names";
import { describeInterface, doubleLiteral, type PreparedModel } from "./prepare";

/**
 * MATLAB / Octave: one function file `<name>_equations.m` returning M, f, A
 * and B, with local functions; 1-based indexing, backslash solves.
 */
export function emitMatlab(model: PreparedModel): string {
  const { n, m, name } = model;
  const printed = model.print(
    {
      number: doubleLiteral,
      call: (fn: FunctionName, arg) => `${fn}(${arg})`,
      power: (base, exponent) => `${base}^${exponent}`,
      temporary: (i) => `t${i}_`,
    },
    (slot) => (slot.array === "t" ? "t" : `${argumentOf(slot)}(${slot.index + 1})`),
  );
  const temporaries = (fn: { temporaries: { name: string; code: string }[] }) => fn.temporaries.map((tmp) => `  ${tmp.name} = ${tmp.code};`).join("\n");
  const assign = (target: string, outputs: string[], rows: number, cols: number) =>
    [`  ${target} = zeros(${rows}, ${cols});`, ...outputs.map((code, i) => `  ${target}(${Math.floor(i / cols) + 1}, ${(i % cols) + 1}) = ${code};`)].join(
      "\n",
    );
  const { jacobians } = printed;
  const defaults = model.parameters.map((p) => (p.value === undefined ? "NaN" : doubleLiteral(p.value))).join("; ");

  const args = "coordinates, rates, t, parameters, inputs";

  return `function [M, f, A, B] = ${name}_equations(${args})
${describeInterface(model, 1)
  .map((line) => `% ${line}`)
  .join("\n")}
%
% Save as ${name}_equations.m. Call [M, f, A, B] = ${name}_equations(coordinates, rates, t) for the
% parameter defaults, or pass parameters (column vector) and inputs. Runs in MATLAB and GNU Octave.
  if nargin < 4 || isempty(parameters)
    parameters = [${defaults}];
  end
  if nargin < 5
    inputs = zeros(${m}, 1);
  end
  M = mass_matrix(${args});
  f = forcing(${args});
  [A, B] = state_matrices(${args});
end

function M = mass_matrix(${args})
% Mass matrix M (${n}x${n}).
${temporaries(printed.mass)}
${assign("M", printed.mass.outputs, n, n)}
end

function f = forcing(${args})
% Forcing f (${n}x1).
${temporaries(printed.forcing)}
${assign("f", printed.forcing.outputs, n, 1)}
end

function [residual_by_coordinates, residual_by_rates, residual_by_inputs] = residual_jacobians(coordinates, rates, accelerations, t, parameters, inputs)
% Jacobians of the residual r = M accelerations - f with respect to the coordinates, the rates and the inputs.
${temporaries(jacobians)}
${assign("residual_by_coordinates", jacobians.outputs.slice(0, n * n), n, n)}
${assign("residual_by_rates", jacobians.outputs.slice(n * n, 2 * n * n), n, n)}
${m > 0 ? assign("residual_by_inputs", jacobians.outputs.slice(2 * n * n), n, m) : `  residual_by_inputs = zeros(${n}, 0);`}
end

function [A, B] = state_matrices(${args})
% State-space A (${2 * n}x${2 * n}) and B (${2 * n}x${m}) of dx/dt = [rates; M^-1 f] at the given state, x = [coordinates; rates].
  M = mass_matrix(${args});
  [by_coordinates, by_rates, by_inputs] = residual_jacobians(coordinates, rates, M \\ forcing(${args}), t, parameters, inputs);
  A = [zeros(${n}), eye(${n}); -(M \\ by_coordinates), -(M \\ by_rates)];
  B = [zeros(${n}, ${m}); -(M \\ by_inputs)];
end
`;
}
