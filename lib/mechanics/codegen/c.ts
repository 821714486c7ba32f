import type { FunctionName } from "../expr/ast";
import { argumentOf } from "./names";
import { describeInterface, doubleLiteral, type PreparedModel } from "./prepare";

const C_FUNCTIONS: Record<FunctionName, string> = {
  sin: "sin",
  cos: "cos",
  tan: "tan",
  exp: "exp",
  log: "log",
  sqrt: "sqrt",
  abs: "fabs",
  sinh: "sinh",
  cosh: "cosh",
  tanh: "tanh",
  asin: "asin",
  acos: "acos",
  atan: "atan",
};

/** C99 with math.h: self-contained functions over plain double arrays (matrices row-major). */
export function emitC(model: PreparedModel): string {
  const { n, m, name } = model;
  const np = model.parameters.length;
  const upper = name.toUpperCase();
  const printed = model.print(
    {
      number: doubleLiteral,
      call: (fn, arg) => `${C_FUNCTIONS[fn]}(${arg})`,
      power: (base, exponent) => `pow(${base}, ${exponent})`,
      temporary: (i) => `t${i}_`,
    },
    (slot) => (slot.array === "t" ? "t" : `${argumentOf(slot)}[${slot.index}]`),
  );
  const signature = (extra: string) => `const double *coordinates, const double *rates, double t, const double *parameters, const double *inputs${extra}`;
  const call = "coordinates, rates, t, parameters, inputs";
  const body = (fn: { temporaries: { name: string; code: string }[]; outputs: string[] }, target: (i: number) => string) =>
    [...fn.temporaries.map((tmp) => `    const double ${tmp.name} = ${tmp.code};`), ...fn.outputs.map((code, i) => `    ${target(i)} = ${code};`)].join("\n");
  const unused = "    (void)coordinates; (void)rates; (void)t; (void)parameters; (void)inputs;";
  const jacobianTarget = (i: number) =>
    i < n * n ? `residual_by_coordinates[${i}]` : i < 2 * n * n ? `residual_by_rates[${i - n * n}]` : `residual_by_inputs[${i - 2 * n * n}]`;
  const defaults = np === 0 ? "0.0" : model.parameters.map((p) => (p.value === undefined ? "NAN" : doubleLiteral(p.value))).join(", ");

  return `/*
${describeInterface(model, 0)
  .map((line) => ` * ${line}`)
  .join("\n")}
 *
 * Matrices are row-major: M[i*${upper}_COORDINATE_COUNT + j]. Compile with: cc -std=c99 -c file.c -lm
 */
#include <math.h>

#define ${upper}_COORDINATE_COUNT ${n}
#define ${upper}_INPUT_COUNT ${m}
#define ${upper}_PARAMETER_COUNT ${np}

/* Parameter defaults in the order of the parameters argument (NAN where the model gives no value). */
static const double ${name}_default_parameters[${Math.max(np, 1)}] = { ${defaults} };

const double *${name}_defaults(void) { return ${name}_default_parameters; }

/* Mass matrix M (${n}x${n}). */
void ${name}_mass_matrix(${signature(", double *M")}) {
${unused}
${body(printed.mass, (i) => `M[${i}]`)}
}

/* Forcing f (${n}). */
void ${name}_forcing(${signature(", double *f")}) {
${unused}
${body(printed.forcing, (i) => `f[${i}]`)}
}

/* Jacobians of the residual r = M accelerations - f with respect to the coordinates, the rates and the inputs. */
void ${name}_residual_jacobians(const double *coordinates, const double *rates, const double *accelerations, double t, const double *parameters, const double *inputs,
                                double *residual_by_coordinates, double *residual_by_rates, double *residual_by_inputs) {
    (void)coordinates; (void)rates; (void)accelerations; (void)t; (void)parameters; (void)inputs; (void)residual_by_inputs;
${body(printed.jacobians, jacobianTarget)}
}

/* Solves A X = B in place (A n x n, B n x k, both row-major) by Gaussian elimination with partial pivoting.
   Returns 0, or -1 when A is singular. */
static int ${name}_solve(int n, double *a, double *b, int k) {
    for (int col = 0; col < n; col++) {
        int pivot = col;
        for (int i = col + 1; i < n; i++) if (fabs(a[i * n + col]) > fabs(a[pivot * n + col])) pivot = i;
        if (!(fabs(a[pivot * n + col]) > 0.0)) return -1;
        if (pivot != col) {
            for (int j = 0; j < n; j++) { double s = a[col * n + j]; a[col * n + j] = a[pivot * n + j]; a[pivot * n + j] = s; }
            for (int j = 0; j < k; j++) { double s = b[col * k + j]; b[col * k + j] = b[pivot * k + j]; b[pivot * k + j] = s; }
        }
        for (int i = col + 1; i < n; i++) {
            double factor = a[i * n + col] / a[col * n + col];
            for (int j = col; j < n; j++) a[i * n + j] -= factor * a[col * n + j];
            for (int j = 0; j < k; j++) b[i * k + j] -= factor * b[col * k + j];
        }
    }
    for (int i = n - 1; i >= 0; i--) {
        for (int j = 0; j < k; j++) {
            double s = b[i * k + j];
            for (int l = i + 1; l < n; l++) s -= a[i * n + l] * b[l * k + j];
            b[i * k + j] = s / a[i * n + i];
        }
    }
    return 0;
}

/* Accelerations M^-1 f. Returns 0, or -1 when M is singular. */
int ${name}_accelerations(${signature(", double *accelerations")}) {
    double M[${n * n}];
    ${name}_mass_matrix(${call}, M);
    ${name}_forcing(${call}, accelerations);
    return ${name}_solve(${n}, M, accelerations, 1);
}

/* State-space A (${2 * n}x${2 * n}) and B (${2 * n}x${m}) of dx/dt = [rates; M^-1 f] at the given state, x = [coordinates; rates].
   Returns 0, or -1 when M is singular. */
int ${name}_state_matrices(${signature(", double *A, double *B")}) {
    double M[${n * n}], accelerations[${n}];
    double residual_by_coordinates[${n * n}], residual_by_rates[${n * n}], residual_by_inputs[${Math.max(n * m, 1)}];
    double rhs[${n * (2 * n + m)}];
    if (${name}_accelerations(${call}, accelerations) != 0) return -1;
    ${name}_mass_matrix(${call}, M);
    ${name}_residual_jacobians(coordinates, rates, accelerations, t, parameters, inputs, residual_by_coordinates, residual_by_rates, residual_by_inputs);
    /* Solve M [X_coordinates X_rates X_inputs] = -[residual_by_coordinates residual_by_rates residual_by_inputs] in one pass. */
    for (int i = 0; i < ${n}; i++) {
        for (int j = 0; j < ${n}; j++) {
            rhs[i * ${2 * n + m} + j] = -residual_by_coordinates[i * ${n} + j];
            rhs[i * ${2 * n + m} + ${n} + j] = -residual_by_rates[i * ${n} + j];
        }
        for (int k = 0; k < ${m}; k++) rhs[i * ${2 * n + m} + ${2 * n} + k] = -residual_by_inputs[i * ${Math.max(m, 1)} + k];
    }
    if (${name}_solve(${n}, M, rhs, ${2 * n + m}) != 0) return -1;
    for (int i = 0; i < ${4 * n * n}; i++) A[i] = 0.0;
    for (int i = 0; i < ${n}; i++) {
        A[i * ${2 * n} + ${n} + i] = 1.0;
        for (int j = 0; j < ${2 * n}; j++) A[(${n} + i) * ${2 * n} + j] = rhs[i * ${2 * n + m} + j];
    }
    for (int i = 0; i < ${2 * n * m}; i++) B[i] = 0.0;
    for (int i = 0; i < ${n}; i++)
        for (int k = 0; k < ${m}; k++) B[(${n} + i) * ${Math.max(m, 1)} + k] = rhs[i * ${2 * n + m} + ${2 * n} + k];
    return 0;
}
`;
}
