/**
 * Julia and MATLAB/Octave are not installed on the test machine, so their
 * exports are checked structurally — balanced brackets, block ends, 1-based
 * indices in range, every temporary assigned before use — and by reading the
 * generated assignments back: each right-hand side, with array references
 * renamed to model symbols, is parsed and evaluated by the engine and must
 * equal the engine's M, f and residual Jacobians.
 */
import { describe, expect, it } from "vitest";
import { exportCode, type CodeExportInput } from "@/lib/mechanics/codegen";
import { compileExpressions } from "@/lib/mechanics/compile";
import { compileAnalysis } from "@/lib/mechanics/linearize";

// Cart with a hanging load on a trolley crane (our demo scenario), with every array kind in use.
const MODEL: CodeExportInput = {
  name: "trolley",
  coordinates: ["x", "theta"],
  inputs: ["F"],
  parameters: [
    { name: "M", value: 120 },
    { name: "m", value: 800 },
    { name: "l", value: 6 },
    { name: "g", value: 9.81 },
    { name: "c", value: 40 },
  ],
  massMatrix: [
    ["M + m", "m*l*cos(theta)"],
    ["m*l*cos(theta)", "m*l^2"],
  ],
  forcing: ["F - c*x' + m*l*theta'^2*sin(theta)", "-m*g*l*sin(theta) - 0.5*c*theta'*abs(theta')^1.5 + exp(-t)*atan(x)"],
};

const SIZES: Record<string, number> = { coordinates: 2, rates: 2, accelerations: 2, parameters: 5, inputs: 1 };
const NAMES: Record<string, (i: number) => string> = {
  coordinates: (i) => MODEL.coordinates[i]!,
  rates: (i) => `${MODEL.coordinates[i]}'`,
  accelerations: (i) => `${MODEL.coordinates[i]}''`,
  parameters: (i) => MODEL.parameters[i]!.name,
  inputs: (i) => MODEL.inputs![i]!,
};

function expectBalanced(code: string) {
  const stripped = code.replace(/"[^"\n]*"/g, '""').replace(/(#|%).*$/gm, "");
  const stack: string[] = [];
  const pairs: Record<string, string> = { ")": "(", "]": "[", "}": "{" };
  for (const ch of stripped) {
    if (ch === "(" || ch === "[" || ch === "{") stack.push(ch);
    else if (ch in pairs) expect(stack.pop(), `unbalanced ${ch}`).toBe(pairs[ch]);
  }
  expect(stack).toEqual([]);
}

/** Renames 1-based array references (q[1] or q(1)) to model symbols, checking each index is in range. */
function rename(expression: string, open: "[" | "("): string {
  const pattern =
    open === "[" ? /\b(coordinates|rates|accelerations|parameters|inputs)\[(\d+)\]/g : /\b(coordinates|rates|accelerations|parameters|inputs)\((\d+)\)/g;
  return expression.replace(pattern, (_, array: string, index: string) => {
    const i = Number(index);
    expect(i, `${array} index ${i} is 1-based and in range`).toBeGreaterThanOrEqual(1);
    expect(i).toBeLessThanOrEqual(SIZES[array]!);
    return NAMES[array]!(i - 1);
  });
}

/** Evaluates assignments in order; a temporary used before it is assigned is an unknown symbol. */
class Scope {
  readonly values = new Map<string, number>();
  constructor(base: Record<string, number>) {
    for (const [k, v] of Object.entries(base)) this.values.set(k, v);
  }
  evaluate(expression: string): number {
    const variables = [...this.values.keys()];
    const out = new Float64Array(1);
    compileExpressions([expression], variables).evaluate(
      variables.map((v) => this.values.get(v)!),
      out,
    );
    return out[0]!;
  }
}

/** The top-level parenthesized groups of a Julia matrix literal, in order. */
function parenthesizedEntries(literal: string): string[] {
  const entries: string[] = [];
  let depth = 0;
  let start = -1;
  for (let i = 0; i < literal.length; i++) {
    if (literal[i] === "(") {
      if (depth === 0) start = i + 1;
      depth++;
    } else if (literal[i] === ")") {
      depth--;
      if (depth === 0) entries.push(literal.slice(start, i));
    }
  }
  return entries;
}

const state = { q: [0.4, -0.7], qd: [1.1, -0.3], qdd: [0.25, -1.7], t: 0.9, u: [350] };
const base: Record<string, number> = { t: state.t };
MODEL.coordinates.forEach((c, i) => {
  base[c] = state.q[i]!;
  base[`${c}'`] = state.qd[i]!;
  base[`${c}''`] = state.qdd[i]!;
});
MODEL.parameters.forEach((p) => (base[p.name] = p.value!));
MODEL.inputs!.forEach((u, i) => (base[u] = state.u[i]!));
const expected = compileAnalysis({ ...MODEL, inputs: MODEL.inputs!, parameters: Object.fromEntries(MODEL.parameters.map((p) => [p.name, p.value!])) }).at(
  state.q,
  state.qd,
  state.qdd,
  state.t,
  state.u,
);
const EXPECTED: Record<string, number[]> = {
  M: expected.mass.flat(),
  f: expected.forcing,
  residual_by_coordinates: expected.byCoordinate.flat(),
  residual_by_rates: expected.byRate.flat(),
  residual_by_inputs: expected.byInput.flat(),
};

function expectValues(name: string, actual: number[]) {
  const wanted = EXPECTED[name]!;
  expect(actual.length, name).toBe(wanted.length);
  actual.forEach((v, i) => expect(Math.abs(v - wanted[i]!), `${name}[${i}]`).toBeLessThanOrEqual(1e-12 * Math.max(1, Math.abs(wanted[i]!))));
}

describe("Julia export (structural; Julia is not installed)", () => {
  const code = exportCode(MODEL, "julia");

  it("has balanced brackets and one end per block", () => {
    expectBalanced(code);
    const opened = code.match(/^\s*(function|for|if)\b/gm)!.length;
    const closed = code.match(/^\s*end\s*$/gm)!.length;
    expect(closed).toBe(opened);
    expect(code).not.toMatch(/\b(coordinates|rates|accelerations|parameters|inputs)\[0\]/);
  });

  it("assigns temporaries before use and its M, f and Jacobians evaluate to the engine's numbers", () => {
    const functions = code.split(/^function /m).slice(1);
    const seen = new Set<string>();
    for (const fn of functions) {
      const name = /^(\w+)/.exec(fn)![1]!;
      const scope = new Scope(base);
      for (const line of fn.split("\n")) {
        const tmp = /^\s+(t\d+_) = (.*)$/.exec(line);
        if (tmp) scope.values.set(tmp[1]!, scope.evaluate(rename(tmp[2]!, "[")));
      }
      const literal = (target: string) => {
        const match = new RegExp(`${target}(?: = | )(\\[[\\s\\S]*?\\n\\s*\\]|\\[[^\\n]*\\]|zeros\\(\\d+, 0\\))`).exec(fn);
        expect(match, `${name}: ${target}`).not.toBeNull();
        return parenthesizedEntries(match![1]!.startsWith("zeros") ? "" : match![1]!).map((e) => scope.evaluate(rename(e, "[")));
      };
      if (name === "mass_matrix") expectValues("M", literal("return"));
      if (name === "forcing") expectValues("f", literal("return"));
      if (name === "residual_jacobians")
        for (const target of ["residual_by_coordinates", "residual_by_rates", "residual_by_inputs"]) expectValues(target, literal(target));
      seen.add(name);
    }
    expect([...seen]).toEqual(expect.arrayContaining(["mass_matrix", "forcing", "residual_jacobians", "state_matrices"]));
  });
});

describe("MATLAB/Octave export (structural; neither is installed)", () => {
  const code = exportCode(MODEL, "matlab");

  it("is one function file with local functions, balanced brackets and one end per block", () => {
    expect(code.startsWith("function [M, f, A, B] = trolley_equations(coordinates, rates, t, parameters, inputs)")).toBe(true);
    expectBalanced(code);
    const opened = code.match(/^\s*(function|for|if)\b/gm)!.length;
    const closed = code.match(/^\s*end\s*$/gm)!.length;
    expect(closed).toBe(opened);
    expect(code).not.toMatch(/\b(coordinates|rates|accelerations|parameters|inputs)\(0\)/);
  });

  it("assigns temporaries before use and its M, f and Jacobians evaluate to the engine's numbers", () => {
    const functions = code.split(/^function /m).slice(1);
    const found = new Set<string>();
    for (const fn of functions) {
      const scope = new Scope(base);
      const entries = new Map<string, number[]>();
      for (const line of fn.split("\n")) {
        const tmp = /^\s+(t\d+_) = (.*);$/.exec(line);
        if (tmp) scope.values.set(tmp[1]!, scope.evaluate(rename(tmp[2]!, "(")));
        const entry = /^\s+(M|f|residual_by_coordinates|residual_by_rates|residual_by_inputs)\((\d+), (\d+)\) = (.*);$/.exec(line);
        if (entry) {
          const list = entries.get(entry[1]!) ?? [];
          list.push(scope.evaluate(rename(entry[4]!, "(")));
          entries.set(entry[1]!, list);
        }
      }
      for (const [target, values] of entries) {
        expectValues(target, values);
        found.add(target);
      }
    }
    expect([...found].sort()).toEqual(["M", "f", "residual_by_coordinates", "residual_by_inputs", "residual_by_rates"]);
  });
});
