import type { FunctionName } from "../expr/ast";
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
    (slot) => (slot.array === "t" ? "t" : `${slot.array}(${slot.index + 1})`),
  );
  const temporaries = (fn: { temporaries: { name: string; code: string }[] }) => fn.temporaries.map((tmp) => `  ${tmp.name} = ${tmp.code};`).join("\n");
  const assign = (target: string, outputs: string[], rows: number, cols: number) =>
    [`  ${target} = zeros(${rows}, ${cols});`, ...outputs.map((code, i) => `  ${target}(${Math.floor(i / cols) + 1}, ${(i % cols) + 1}) = ${code};`)].join("\n");
  const { jacobians } = printed;
  const defaults = model.parameters.map((p) => (p.value === undefined ? "NaN" : doubleLiteral(p.value))).join("; ");

  return `function [M, f, A, B] = ${name}_equations(q, qd, t, p, u)
${describeInterface(model, 1).map((line) => `% ${line}`).join("\n")}
%
% Save as ${name}_equations.m. Call [M, f, A, B] = ${name}_equations(q, qd, t) for the
% parameter defaults, or pass p (column vector) and u. Runs in MATLAB and GNU Octave.
  if nargin < 4 || isempty(p)
    p = [${defaults}];
  end
  if nargin < 5
    u = zeros(${m}, 1);
  end
  M = mass_matrix(q, qd, t, p, u);
  f = forcing(q, qd, t, p, u);
  [A, B] = state_matrices(q, qd, t, p, u);
end

function M = mass_matrix(q, qd, t, p, u)
% Mass matrix M (${n}x${n}).
${temporaries(printed.mass)}
${assign("M", printed.mass.outputs, n, n)}
end

function f = forcing(q, qd, t, p, u)
% Forcing f (${n}x1).
${temporaries(printed.forcing)}
${assign("f", printed.forcing.outputs, n, 1)}
end

function [dr_dq, dr_dqd, dr_du] = residual_jacobians(q, qd, qdd, t, p, u)
% Jacobians of r = M qdd - f with respect to q, qd and u, at the given qdd.
${temporaries(jacobians)}
${assign("dr_dq", jacobians.outputs.slice(0, n * n), n, n)}
${assign("dr_dqd", jacobians.outputs.slice(n * n, 2 * n * n), n, n)}
${m > 0 ? assign("dr_du", jacobians.outputs.slice(2 * n * n), n, m) : `  dr_du = zeros(${n}, 0);`}
end

function [A, B] = state_matrices(q, qd, t, p, u)
% State-space A (${2 * n}x${2 * n}) and B (${2 * n}x${m}) of dx/dt = [qd; M^-1 f] at (q, qd, t, u), x = [q; qd].
  M = mass_matrix(q, qd, t, p, u);
  qdd = M \\ forcing(q, qd, t, p, u);
  [dr_dq, dr_dqd, dr_du] = residual_jacobians(q, qd, qdd, t, p, u);
  A = [zeros(${n}), eye(${n}); -(M \\ dr_dq), -(M \\ dr_dqd)];
  B = [zeros(${n}, ${m}); -(M \\ dr_du)];
end
`;
}
