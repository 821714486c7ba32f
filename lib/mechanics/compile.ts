import { ExpressionError } from "./errors";
import { expressionTree, type ExpressionSource } from "./expr/parse";
import { ExpressionGraph, type GraphOp, type SymbolBinding } from "./graph";
import { SingularMatrixError } from "../numeric/errors";
import { createLuWorkspace, solveInPlace } from "../numeric/linear-solve";

/**
 * Numeric evaluation compiled from the parsed tree only — never from text via
 * eval or new Function. All expressions go into one hash-consed graph
 * (graph.ts), so subexpressions shared between outputs are computed once; the
 * graph is then laid out as a flat instruction tape over a Float64Array of
 * registers and run by a switch over a whitelist of opcodes.
 */

const OPCODES = {
  add: 0,
  sub: 1,
  mul: 2,
  div: 3,
  neg: 4,
  pow: 5,
  square: 6,
  cube: 7,
  sin: 8,
  cos: 9,
  tan: 10,
  exp: 11,
  log: 12,
  sqrt: 13,
  abs: 14,
  sinh: 15,
  cosh: 16,
  tanh: 17,
  asin: 18,
  acos: 19,
  atan: 20,
} as const satisfies Record<Exclude<GraphOp, "const" | "var">, number>;

export { DERIVED_EXPRESSION_LIMITS } from "./expr/parse";

export interface CompiledExpressions {
  /** The variable names, in the order `values` holds them. */
  readonly variables: readonly string[];
  readonly outputCount: number;
  /** Instructions on the tape after sharing (a measure of the work per evaluation). */
  readonly instructionCount: number;
  /** Writes every output for the given variable values into `out`. */
  evaluate(values: ArrayLike<number>, out: Float64Array): void;
}

export interface CompileOptions {
  /** Identifiers replaced by fixed numbers at compile time (parameter values). */
  constants?: Readonly<Record<string, number>>;
}

/**
 * Parses a variable name such as `theta1`, `theta1'` or `t` into identifier and order.
 */
export function parseVariableName(variable: string): { name: string; order: 0 | 1 | 2 } {
  const match = /^([A-Za-z_][A-Za-z0-9_]*)('{0,2})$/.exec(variable);
  if (!match) throw new ExpressionError("parse", `"${variable}" is not a variable name`, 0, variable.length);
  return { name: match[1]!, order: match[2]!.length as 0 | 1 | 2 };
}

/** A binder for ExpressionGraph.fromExpr over named variables and constants. */
export function symbolBinder(
  variables: readonly string[],
  constants: Readonly<Record<string, number>> = {},
): (name: string, order: 0 | 1 | 2) => SymbolBinding | undefined {
  const slots = new Map<string, number>();
  variables.forEach((v, i) => {
    const { name, order } = parseVariableName(v);
    slots.set(name + "'".repeat(order), i);
  });
  return (name, order) => {
    const key = name + "'".repeat(order);
    const slot = slots.get(key);
    if (slot !== undefined) return { variable: slot };
    if (order === 0 && Object.prototype.hasOwnProperty.call(constants, name)) return { value: constants[name]! };
    return undefined;
  };
}

/**
 * Compiles expressions (text in the input syntax, or parsed trees) over the
 * named variables into one evaluator.
 *
 * @example
 * const c = compileExpressions(["m*l^2", "-m*g*l*sin(theta)"], ["theta", "theta'"], { constants: { m: 1, l: 2, g: 9.81 } });
 * const out = new Float64Array(2); c.evaluate([0.3, 0], out);
 */
export function compileExpressions(expressions: readonly ExpressionSource[], variables: readonly string[], options: CompileOptions = {}): CompiledExpressions {
  const graph = new ExpressionGraph();
  const bind = symbolBinder(variables, options.constants);
  const roots = expressions.map((e) => graph.fromExpr(expressionTree(e), bind));
  return compileGraph(graph, roots, variables);
}

/** Lays out the part of a graph that `roots` need as a tape, and returns its evaluator. */
export function compileGraph(graph: ExpressionGraph, roots: readonly number[], variables: readonly string[]): CompiledExpressions {
  const order = graph.reachable(roots);
  const nv = variables.length;
  // Registers: [0, nv) variables, then constants, then one per instruction.
  const register = new Int32Array(graph.nodes.length).fill(-1);
  const constants: number[] = [];
  let next = nv;
  for (const id of order) {
    const node = graph.nodes[id]!;
    if (node.op === "var") register[id] = node.a;
    else if (node.op === "const") {
      register[id] = next++;
      constants.push(node.value);
    }
  }
  const code: number[] = [];
  for (const id of order) {
    const node = graph.nodes[id]!;
    if (node.op === "var" || node.op === "const") continue;
    register[id] = next++;
    code.push(OPCODES[node.op], register[id]!, register[node.a]!, node.b >= 0 ? register[node.b]! : 0);
  }
  const tape = Int32Array.from(code);
  const registers = new Float64Array(next);
  registers.set(constants, nv);
  const outputs = Int32Array.from(roots, (id) => register[id]!);
  const length = tape.length;

  const evaluate = (values: ArrayLike<number>, out: Float64Array): void => {
    const r = registers;
    const c = tape;
    for (let i = 0; i < nv; i++) r[i] = values[i]!;
    for (let pc = 0; pc < length; pc += 4) {
      const d = c[pc + 1]!;
      const a = r[c[pc + 2]!]!;
      switch (c[pc]) {
        case 0:
          r[d] = a + r[c[pc + 3]!]!;
          break;
        case 1:
          r[d] = a - r[c[pc + 3]!]!;
          break;
        case 2:
          r[d] = a * r[c[pc + 3]!]!;
          break;
        case 3:
          r[d] = a / r[c[pc + 3]!]!;
          break;
        case 4:
          r[d] = -a;
          break;
        case 5:
          r[d] = Math.pow(a, r[c[pc + 3]!]!);
          break;
        case 6:
          r[d] = a * a;
          break;
        case 7:
          r[d] = a * a * a;
          break;
        case 8:
          r[d] = Math.sin(a);
          break;
        case 9:
          r[d] = Math.cos(a);
          break;
        case 10:
          r[d] = Math.tan(a);
          break;
        case 11:
          r[d] = Math.exp(a);
          break;
        case 12:
          r[d] = Math.log(a);
          break;
        case 13:
          r[d] = Math.sqrt(a);
          break;
        case 14:
          r[d] = Math.abs(a);
          break;
        case 15:
          r[d] = Math.sinh(a);
          break;
        case 16:
          r[d] = Math.cosh(a);
          break;
        case 17:
          r[d] = Math.tanh(a);
          break;
        case 18:
          r[d] = Math.asin(a);
          break;
        case 19:
          r[d] = Math.acos(a);
          break;
        case 20:
          r[d] = Math.atan(a);
          break;
      }
    }
    for (let i = 0; i < outputs.length; i++) out[i] = r[outputs[i]!]!;
  };

  return { variables: [...variables], outputCount: roots.length, instructionCount: length / 4, evaluate };
}

/**
 * The equations of motion in mass-matrix form, M(q, q', t, u) q'' = f(q, q', t, u),
 * with numbers for the parameters: what compilation, linearization and the
 * equilibrium search take.
 */
export interface MassMatrixSystem {
  /** Coordinate names, in order. */
  coordinates: readonly string[];
  /** Input names, in order. */
  inputs?: readonly string[];
  /** Units of the coordinates, in order; "rad" marks an angle (wrapped modulo 2π by findEquilibria). */
  coordinateUnits?: readonly string[];
  /** n×n expressions (trees, or text parsed once here). */
  massMatrix: readonly (readonly ExpressionSource[])[];
  /** n expressions. */
  forcing: readonly ExpressionSource[];
  /** Parameter values, fixed at compile time. */
  parameters: Readonly<Record<string, number>>;
}

export interface CompiledMassMatrixSystem {
  readonly size: number;
  readonly inputCount: number;
  readonly instructionCount: number;
  /** Evaluates M (row-major n×n) and f at a state. */
  massMatrixAndForcing(t: number, q: ArrayLike<number>, rates: ArrayLike<number>, u: ArrayLike<number>, mass: Float64Array, forcing: Float64Array): void;
  /**
   * Solves M q'' = f by LU with partial pivoting and writes q'' into `out`.
   * Returns false (leaving `out` undefined) when M is singular at this state.
   */
  accelerations(t: number, q: ArrayLike<number>, rates: ArrayLike<number>, u: ArrayLike<number>, out: Float64Array): boolean;
  /**
   * The first-order right-hand side with x = [q; q']: writes [q'; q''] into `dxdt`.
   * Returns false when M is singular at this state.
   */
  stateDerivative(t: number, x: ArrayLike<number>, u: ArrayLike<number>, dxdt: Float64Array): boolean;
}

/**
 * Compiles the mass-matrix form into a right-hand side for integrators.
 * Variable slots: q (n), q' (n), t, u (m); parameters are folded in as numbers.
 *
 * @example
 * const sys = compileMassMatrixSystem({ coordinates: ["x"], massMatrix: [["m"]], forcing: ["-k*x"], parameters: { m: 1, k: 4 } });
 * const dx = new Float64Array(2); sys.stateDerivative(0, [1, 0], [], dx); // dx = [0, -4]
 */
export function compileMassMatrixSystem(system: MassMatrixSystem): CompiledMassMatrixSystem {
  const n = system.coordinates.length;
  const inputs = system.inputs ?? [];
  const m = inputs.length;
  if (system.massMatrix.length !== n || system.massMatrix.some((row) => row.length !== n) || system.forcing.length !== n) {
    throw new RangeError(`mass matrix must be ${n}×${n} and forcing of length ${n}`);
  }
  const variables = [...system.coordinates, ...system.coordinates.map((q) => `${q}'`), "t", ...inputs];
  const compiled = compileExpressions([...system.massMatrix.flat(), ...system.forcing], variables, { constants: system.parameters });
  const values = new Float64Array(variables.length);
  const out = new Float64Array(n * n + n);
  // One LU implementation serves the engine and the integrators (lib/simulate/linear-solve.ts).
  const lu = n > 0 ? createLuWorkspace(n) : null;

  const load = (t: number, q: ArrayLike<number>, rates: ArrayLike<number>, u: ArrayLike<number>) => {
    for (let i = 0; i < n; i++) {
      values[i] = q[i]!;
      values[n + i] = rates[i]!;
    }
    values[2 * n] = t;
    for (let k = 0; k < m; k++) values[2 * n + 1 + k] = u[k]!;
    compiled.evaluate(values, out);
  };

  const accelerations = (t: number, q: ArrayLike<number>, rates: ArrayLike<number>, u: ArrayLike<number>, result: Float64Array): boolean => {
    load(t, q, rates, u);
    if (lu === null) return true;
    for (let i = 0; i < n * n; i++) lu.matrix[i] = out[i]!;
    for (let i = 0; i < n; i++) result[i] = out[n * n + i]!;
    try {
      solveInPlace(lu, result);
    } catch (error) {
      if (error instanceof SingularMatrixError) return false;
      throw error;
    }
    return true;
  };

  const qView = new Float64Array(n);
  const rateView = new Float64Array(n);
  const acc = new Float64Array(n);
  return {
    size: n,
    inputCount: m,
    instructionCount: compiled.instructionCount,
    massMatrixAndForcing(t, q, rates, u, mass, forcing) {
      load(t, q, rates, u);
      for (let i = 0; i < n * n; i++) mass[i] = out[i]!;
      for (let i = 0; i < n; i++) forcing[i] = out[n * n + i]!;
    },
    accelerations,
    stateDerivative(t, x, u, dxdt) {
      for (let i = 0; i < n; i++) {
        qView[i] = x[i]!;
        rateView[i] = x[n + i]!;
      }
      if (!accelerations(t, qView, rateView, u, acc)) return false;
      for (let i = 0; i < n; i++) {
        dxdt[i] = rateView[i]!;
        dxdt[n + i] = acc[i]!;
      }
      return true;
    },
  };
}
