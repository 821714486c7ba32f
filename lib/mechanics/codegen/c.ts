import type { FunctionName } from "../expr/ast";
import { describeInterface, doubleLiteral, type PreparedModel } from "./prepare";

const C_FUNCTIONS: Record<FunctionName, string> = {
  sin: "sin", cos: "cos", tan: "tan", exp: "exp", log: "log", sqrt: "sqrt", abs: "fabs",
  sinh: "sinh", cosh: "cosh", tanh: "tanh", asin: "asin", acos: "acos", atan: "atan",
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
    (slot) => (slot.array === "t" ? "t" : `${slot.array}[${slot.index}]`),
  );
  const signature = (extra: string) => `const double *q, const double *qd, double t, const double *p, const double *u${extra}`;
  const body = (fn: { temporaries: { name: string; code: string }[]; outputs: string[] }, target: (i: number) => string) =>
    [...fn.temporaries.map((tmp) => `    const double ${tmp.name} = ${tmp.code};`), ...fn.outputs.map((code, i) => `    ${target(i)} = ${code};`)].join("\n");
  const unused = "    (void)q; (void)qd; (void)t; (void)p; (void)u;";
  const jacobianTarget = (i: number) => (i < n * n ? `dr_dq[${i}]` : i < 2 * n * n ? `dr_dqd[${i - n * n}]` : `dr_du[${i - 2 * n * n}]`);
  const defaults = np === 0 ? "0.0" : model.parameters.map((p) => (p.value === undefined ? "NAN" : doubleLiteral(p.value))).join(", ");

  return `/*
${describeInterface(model, 0).map((line) => ` * ${line}`).join("\n")}
 *
 * Matrices are row-major: M[i*${upper}_NQ + j]. Compile with: cc -std=c99 -c file.c -lm
 */
#include <math.h>

#define ${upper}_NQ ${n}
#define ${upper}_NU ${m}
#define ${upper}_NP ${np}

/* Parameter defaults in the order of p (NAN where the model gives no value). */
static const double ${name}_default_params[${Math.max(np, 1)}] = { ${defaults} };

const double *${name}_defaults(void) { return ${name}_default_params; }

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

/* Jacobians of the residual r = M(q, qd, t, u) qdd - f(q, qd, t, u) at the given qdd. */
void ${name}_residual_jacobians(const double *q, const double *qd, const double *qdd, double t, const double *p, const double *u, double *dr_dq, double *dr_dqd, double *dr_du) {
    (void)q; (void)qd; (void)qdd; (void)t; (void)p; (void)u; (void)dr_du;
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

/* Accelerations qdd = M^-1 f. Returns 0, or -1 when M is singular. */
int ${name}_accelerations(${signature(", double *qdd")}) {
    double M[${n * n}], lu[${n * n}];
    ${name}_mass_matrix(q, qd, t, p, u, M);
    for (int i = 0; i < ${n * n}; i++) lu[i] = M[i];
    ${name}_forcing(q, qd, t, p, u, qdd);
    return ${name}_solve(${n}, lu, qdd, 1);
}

/* State-space A (${2 * n}x${2 * n}) and B (${2 * n}x${m}) of dx/dt = [qd; M^-1 f] at (q, qd, t, u), x = [q; qd].
   Returns 0, or -1 when M is singular. */
int ${name}_state_matrices(${signature(", double *A, double *B")}) {
    double M[${n * n}], lu[${n * n}], qdd[${n}];
    double dr_dq[${n * n}], dr_dqd[${n * n}], dr_du[${Math.max(n * m, 1)}];
    double rhs[${n * (2 * n + m)}];
    if (${name}_accelerations(q, qd, t, p, u, qdd) != 0) return -1;
    ${name}_mass_matrix(q, qd, t, p, u, M);
    ${name}_residual_jacobians(q, qd, qdd, t, p, u, dr_dq, dr_dqd, dr_du);
    /* Solve M [X_q X_qd X_u] = -[dr_dq dr_dqd dr_du] in one pass. */
    for (int i = 0; i < ${n}; i++) {
        for (int j = 0; j < ${n}; j++) {
            rhs[i * ${2 * n + m} + j] = -dr_dq[i * ${n} + j];
            rhs[i * ${2 * n + m} + ${n} + j] = -dr_dqd[i * ${n} + j];
        }
        for (int k = 0; k < ${m}; k++) rhs[i * ${2 * n + m} + ${2 * n} + k] = -dr_du[i * ${Math.max(m, 1)} + k];
    }
    for (int i = 0; i < ${n * n}; i++) lu[i] = M[i];
    if (${name}_solve(${n}, lu, rhs, ${2 * n + m}) != 0) return -1;
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
