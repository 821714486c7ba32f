import { execFileSync } from "node:child_process";
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { exportCode, type CodeExportInput } from "@/lib/mechanics/codegen";
import { compileExpressions } from "@/lib/mechanics/compile";
import { linearizeAbout } from "@/lib/mechanics/linearize";
import { seededRandom } from "../helpers/random-expr";
import { pythonWithNumpy } from "../helpers/python";

// Double pendulum with a shoulder torque and joint damping (Taylor, Classical Mechanics, ch. 11, plus a
// linear damper; from memory) and a rig with every function of the language, so every printer path runs.
const MODELS: Record<string, CodeExportInput> = {
  pendulum: {
    name: "double_pendulum",
    title: "Test rig double pendulum",
    coordinates: ["theta1", "theta2"],
    inputs: ["tau"],
    parameters: [
      { name: "m1", value: 1.3, unit: "kg" },
      { name: "m2", value: 0.7, unit: "kg" },
      { name: "l1", value: 1.1, unit: "m" },
      { name: "l2", value: 0.8, unit: "m" },
      { name: "g", value: 9.81, unit: "m/s^2" },
      { name: "c", value: 0.05, unit: "N*m*s/rad" },
    ],
    massMatrix: [
      ["(m1 + m2)*l1^2", "m2*l1*l2*cos(theta1 - theta2)"],
      ["m2*l1*l2*cos(theta1 - theta2)", "m2*l2^2"],
    ],
    forcing: [
      "tau - c*theta1' - m2*l1*l2*theta2'^2*sin(theta1 - theta2) - (m1 + m2)*g*l1*sin(theta1)",
      "m2*l1*l2*theta1'^2*sin(theta1 - theta2) - m2*g*l2*sin(theta2) - c*(theta2' - theta1')",
    ],
  },
  exotic: {
    name: "gimbal_rig",
    coordinates: ["x", "phi"],
    inputs: ["F", "T"],
    parameters: [
      { name: "m", value: 2.5 },
      { name: "J0", value: 0.3 },
      { name: "k", value: 40 },
      { name: "r", value: 0.25 },
      { name: "a", value: 1.5 },
    ],
    massMatrix: [
      ["m + J0*exp(-x^2)", "r*m*cos(phi)/(2 + x^2)"],
      ["r*m*cos(phi)/(2 + x^2)", "J0 + m*r^2*sqrt(1 + x^2) + cosh(x)/10"],
    ],
    forcing: [
      "F - k*tanh(x) - k*x^3/(1 + x^4) + r*m*phi'^2*sin(phi)*atan(x) - abs(x')*x' + log(2 + x^2)*sinh(x/3)",
      "T - k*r*tan(phi/4) + asin(x/(3 + abs(x))) - acos(phi/(4 + phi^2))*a^(-1.5) + x'*phi'*(1 + x^2)^0.75 - 3*(-phi)^2*phi' + (2 + sin(t))^(1/3)",
    ],
  },
};

interface Case {
  q: number[];
  qd: number[];
  t: number;
  u: number[];
}
interface Result {
  M: number[][];
  f: number[];
  A: number[][];
  B: number[][];
}

function cases(model: CodeExportInput, seed: number): Case[] {
  const random = seededRandom(seed);
  const n = model.coordinates.length;
  const m = model.inputs?.length ?? 0;
  const draw = (k: number) => Array.from({ length: k }, () => random() * 2.4 - 1.2);
  return Array.from({ length: 4 }, () => ({ q: draw(n), qd: draw(n), t: random() * 3, u: draw(m) }));
}

/** The engine's own numbers: compile.ts for M and f, linearize.ts for A and B. */
function engine(model: CodeExportInput, c: Case): Result {
  const n = model.coordinates.length;
  const parameters = Object.fromEntries(model.parameters.map((p) => [p.name, p.value!]));
  const variables = [...model.coordinates, ...model.coordinates.map((q) => `${q}'`), "t", ...(model.inputs ?? [])];
  const compiled = compileExpressions([...model.massMatrix.flat(), ...model.forcing], variables, { constants: parameters });
  const out = new Float64Array(n * n + n);
  compiled.evaluate([...c.q, ...c.qd, c.t, ...c.u], out);
  const M = Array.from({ length: n }, (_, i) => Array.from(out.slice(i * n, (i + 1) * n)));
  const f = Array.from(out.slice(n * n));
  const { A, B } = linearizeAbout(
    { ...model, inputs: model.inputs ?? [], coordinates: model.coordinates, parameters },
    { q: c.q, rates: c.qd, t: c.t, inputs: c.u },
  );
  return { M, f, A, B };
}

function expectClose(actual: Result, expected: Result, label: string) {
  for (const key of ["M", "f", "A", "B"] as const) {
    const a = (actual[key] as (number | number[])[]).flat();
    const e = (expected[key] as (number | number[])[]).flat();
    expect(a.length, `${label} ${key} size`).toBe(e.length);
    const scale = Math.max(...e.map(Math.abs), 1e-300);
    e.forEach((value, i) => {
      // 1e-12 relative to the entry, or to the matrix for entries that cancel to near zero.
      const tolerance = 1e-12 * Math.max(Math.abs(value), 1e-3 * scale);
      expect(Math.abs(a[i]! - value), `${label} ${key}[${i}]: ${a[i]} vs ${value}`).toBeLessThanOrEqual(tolerance);
    });
  }
}

let dir: string;
let python: string;
beforeAll(() => {
  dir = mkdtempSync(path.join(tmpdir(), "holonomy-codegen-"));
  // May install Debian's python3-numpy on a fresh machine, hence the long hook timeout.
  python = pythonWithNumpy();
}, 900_000);
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe.each(Object.entries(MODELS))("exported code for %s", (key, model) => {
  const n = model.coordinates.length;
  const m = model.inputs?.length ?? 0;
  const states = cases(model, key.length * 1000 + 7);

  it("C compiles with gcc -std=c99 -Wall -Werror and matches the engine to 1e-12", () => {
    const name = model.name!;
    writeFileSync(path.join(dir, `${key}.c`), exportCode(model, "c"));
    const calls = states
      .map((c, k) => {
        const arr = (v: number[]) => `{ ${v.length ? v.map((x) => x.toPrecision(17)).join(", ") : "0"} }`;
        return `  {
    const double q[] = ${arr(c.q)}, qd[] = ${arr(c.qd)}, u[] = ${arr(c.u)};
    double M[${n * n}], f[${n}], A[${4 * n * n}], B[${Math.max(2 * n * m, 1)}];
    ${name}_mass_matrix(q, qd, ${c.t.toPrecision(17)}, ${name}_defaults(), u, M);
    ${name}_forcing(q, qd, ${c.t.toPrecision(17)}, ${name}_defaults(), u, f);
    if (${name}_state_matrices(q, qd, ${c.t.toPrecision(17)}, ${name}_defaults(), u, A, B) != 0) return 1;
    printf("%s{\\"M\\":", ${k} ? "," : "");
    dump(M, ${n * n}); printf(",\\"f\\":"); dump(f, ${n}); printf(",\\"A\\":"); dump(A, ${4 * n * n}); printf(",\\"B\\":"); dump(B, ${2 * n * m}); printf("}");
  }`;
      })
      .join("\n");
    writeFileSync(
      path.join(dir, `${key}-main.c`),
      `#include <stdio.h>
const double *${name}_defaults(void);
void ${name}_mass_matrix(const double *, const double *, double, const double *, const double *, double *);
void ${name}_forcing(const double *, const double *, double, const double *, const double *, double *);
int ${name}_state_matrices(const double *, const double *, double, const double *, const double *, double *, double *);
static void dump(const double *v, int k) { printf("["); for (int i = 0; i < k; i++) printf("%s%.17g", i ? "," : "", v[i]); printf("]"); }
int main(void) {
  printf("[");
${calls}
  printf("]\\n");
  return 0;
}
`,
    );
    const binary = path.join(dir, `${key}-c`);
    execFileSync("gcc", ["-std=c99", "-Wall", "-Wextra", "-Werror", "-O2", "-o", binary, path.join(dir, `${key}.c`), path.join(dir, `${key}-main.c`), "-lm"]);
    const flat = JSON.parse(execFileSync(binary, { encoding: "utf8" })) as { M: number[]; f: number[]; A: number[]; B: number[] }[];
    states.forEach((c, k) => {
      const r = flat[k]!;
      const rows = (v: number[], cols: number) => Array.from({ length: v.length / Math.max(cols, 1) }, (_, i) => v.slice(i * cols, (i + 1) * cols));
      expectClose(
        { M: rows(r.M, n), f: r.f, A: rows(r.A, 2 * n), B: m ? rows(r.B, m) : [] },
        { ...engine(model, c), B: m ? engine(model, c).B : [] },
        `C case ${k}`,
      );
    });
  });

  it("Python (NumPy) runs and matches the engine to 1e-12", () => {
    writeFileSync(path.join(dir, `${key}_model.py`), exportCode(model, "python"));
    writeFileSync(
      path.join(dir, `${key}_driver.py`),
      `import json, sys
sys.path.insert(0, ${JSON.stringify(dir)})
import ${key}_model as model
out = []
for c in json.loads(sys.argv[1]):
    A, B = model.state_matrices(c["q"], c["qd"], c["t"], model.DEFAULT_PARAMETERS, c["u"])
    out.append({"M": model.mass_matrix(c["q"], c["qd"], c["t"], model.DEFAULT_PARAMETERS, c["u"]).tolist(),
                "f": model.forcing(c["q"], c["qd"], c["t"], model.DEFAULT_PARAMETERS, c["u"]).tolist(),
                "A": A.tolist(), "B": B.tolist()})
print(json.dumps(out))
`,
    );
    const results = JSON.parse(execFileSync(python, [path.join(dir, `${key}_driver.py`), JSON.stringify(states)], { encoding: "utf8" })) as Result[];
    states.forEach((c, k) => expectClose(results[k]!, engine(model, c), `Python case ${k}`));
  }, 30_000);

  it("TypeScript runs under tsx and matches the engine to 1e-12", () => {
    writeFileSync(path.join(dir, `${key}-model.ts`), exportCode(model, "typescript"));
    writeFileSync(
      path.join(dir, `${key}-driver.ts`),
      `import * as model from "./${key}-model";
const cases = JSON.parse(process.argv[2]!) as { q: number[]; qd: number[]; t: number; u: number[] }[];
console.log(JSON.stringify(cases.map((c) => ({ M: model.massMatrix(c.q, c.qd, c.t, model.DEFAULT_PARAMETERS, c.u), f: model.forcing(c.q, c.qd, c.t, model.DEFAULT_PARAMETERS, c.u), ...model.stateMatrices(c.q, c.qd, c.t, model.DEFAULT_PARAMETERS, c.u) }))));
`,
    );
    const tsx = path.resolve("node_modules/.bin/tsx");
    const results = JSON.parse(execFileSync(tsx, [path.join(dir, `${key}-driver.ts`), JSON.stringify(states)], { encoding: "utf8" })) as Result[];
    states.forEach((c, k) => expectClose(results[k]!, engine(model, c), `TypeScript case ${k}`));
    // Starting tsx takes seconds on a busy two-core machine.
  }, 30_000);
});

describe("exported code speaks the product's words", () => {
  const model = MODELS.pendulum!;
  const signatures: Record<string, RegExp> = {
    c: /void double_pendulum_forcing\(const double \*coordinates, const double \*rates, double t, const double \*parameters, const double \*inputs, double \*f\)/,
    python: /def forcing\(coordinates, rates, t, parameters=DEFAULT_PARAMETERS, inputs=\(\)\):/,
    julia: /function forcing\(coordinates, rates, t, parameters=DEFAULT_PARAMETERS, inputs=Float64\[\]\)/,
    matlab: /function f = forcing\(coordinates, rates, t, parameters, inputs\)/,
    typescript:
      /export function forcing\(coordinates: ArrayLike<number>, rates: ArrayLike<number>, t: number, parameters: ArrayLike<number> = DEFAULT_PARAMETERS, inputs: ArrayLike<number> = \[\]\)/,
  };

  it.each(Object.entries(signatures))("%s names its arguments coordinates, rates, accelerations, parameters and inputs", (language, signature) => {
    const code = exportCode(model, language as Parameters<typeof exportCode>[1]);
    expect(code).toMatch(signature);
    expect(code).toMatch(/residual_jacobians\(|residualJacobians\(/);
    expect(code).toMatch(/\baccelerations\b/);
    // Comments aside, none of the two-letter array names is left: no q, qd, qdd, p or u indexed or passed.
    const uncommented = code
      .split("\n")
      .filter((line) => !/^\s*(#|%|\/\/|\/?\*)/.test(line) && !/^"/.test(line))
      .join("\n");
    expect(uncommented).not.toMatch(/\b(q|qd|qdd|p|u)\s*[[(]\s*\d/);
    expect(uncommented).not.toMatch(/\b(qd|qdd|dr_dq|dr_dqd|dr_du|DEFAULT_PARAMS)\b/);
    expect(uncommented).not.toMatch(/[(,]\s*(q|p|u)\s*[,)=:]/);
  });
});
