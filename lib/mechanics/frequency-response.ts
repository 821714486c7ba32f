import { EigenvalueDecomposition, LuDecomposition, Matrix } from "ml-matrix";
import { safetyNote } from "../domain";
import type { CodeLanguage } from "./codegen";
import { doubleLiteral } from "./codegen/prepare";
import { compileExpressions, type MassMatrixSystem } from "./compile";
import { differentiate } from "./differentiate";
import { ModelError } from "./errors";
import type { Expr } from "./expr/ast";
import { parseExpression } from "./expr/parse";
import type { Complex, Linearization, OperatingPoint } from "./linearize";

/**
 * Frequency-domain view of a linearization: ẋ = A x + B u, y = C x + D u.
 * Framework-free numerics; the notebook's linearization cell plots what
 * these return.
 */

export interface StateSpace {
  /** State names, x = [q; q']. */
  state: string[];
  inputs: string[];
  outputs: string[];
  /** n×n. */
  A: number[][];
  /** n×m. */
  B: number[][];
  /** p×n. */
  C: number[][];
  /** p×m. */
  D: number[][];
}

/** An output chosen for y = C x + D u: an expression in q, q', q'', t and inputs (parameters folded in). */
export interface OutputChoice {
  name: string;
  expr: string;
}

export interface PoleInfo {
  pole: Complex;
  /** |p| in rad/s. */
  naturalFrequency: number;
  /** −Re p / |p|; 1 for a real stable pole, negative for an unstable one; null at p = 0. */
  dampingRatio: number | null;
}

export type ZerosResult = { available: true; zeros: Complex[] } | { available: false; reason: string };

export interface FrequencyResponseOptions {
  /** Input index or name. */
  input: number | string;
  /** Output index or name. */
  output: number | string;
  /** Frequencies in rad/s; otherwise `points` log-spaced between `from` and `to` (defaults from the poles). */
  frequencies?: readonly number[];
  from?: number;
  to?: number;
  points?: number;
}

export interface FrequencyResponse {
  input: string;
  output: string;
  /** rad/s, increasing. */
  frequencies: number[];
  /** 20·log10|H(jω)|; −Infinity where H is exactly zero. */
  magnitudeDb: number[];
  /** arg H(jω) in degrees, unwrapped along the frequencies. */
  phaseDeg: number[];
  poles: PoleInfo[];
  /** Transmission zeros of this input–output pair. */
  zeros: ZerosResult;
}

/** Export formats of the state-space matrices: JSON, CSV, or code in an export language. */
export type StateSpaceFormat = "json" | "csv" | CodeLanguage;

/**
 * C and D of chosen outputs about an operating point, from exact derivatives:
 * C = ∂y/∂x + ∂y/∂q''·A₂, D = ∂y/∂u + ∂y/∂q''·B₂, where A₂, B₂ are the
 * acceleration rows of the linearization (outputs may use accelerations).
 * Throws ModelError naming `outputs[k]` for an expression that does not read
 * or names a symbol the system does not have.
 *
 * @example stateSpaceOf(system, lin, point, [{ name: "x", expr: "x" }]).C // [[1, 0]]
 */
export function stateSpaceOf(system: MassMatrixSystem, linearization: Linearization, point: OperatingPoint, outputs: readonly OutputChoice[]): StateSpace {
  const names = [...system.coordinates];
  const inputs = [...(system.inputs ?? [])];
  const n = names.length;
  const m = inputs.length;
  // With constraints, outputs may read the multipliers, whose first-order change the linearization gives.
  const multipliers = linearization.multiplierRows ? linearization.multipliers : [];
  const l = multipliers.length;
  const variables = [
    ...names,
    ...names.map((q) => `${q}'`),
    ...names.map((q) => `${q}''`),
    "t",
    ...inputs,
    ...multipliers.map((multiplier) => multiplier.symbol),
  ];
  const derivatives: Expr[] = [];
  const trees = outputs.map((o, index) => ModelError.inField(`outputs[${index}].expr`, () => parseExpression(o.expr)));
  for (const tree of trees) {
    for (const q of names) derivatives.push(differentiate(tree, q, 0));
    for (const q of names) derivatives.push(differentiate(tree, q, 1));
    for (const q of names) derivatives.push(differentiate(tree, q, 2));
    for (const u of inputs) derivatives.push(differentiate(tree, u, 0));
    for (const multiplier of multipliers) derivatives.push(differentiate(tree, multiplier.symbol, 0));
  }
  // Each output compiled alone first: an unknown symbol is named with its output (derivatives would drop it).
  trees.forEach((tree, k) => ModelError.inField(`outputs[${k}].expr`, () => compileExpressions([tree], variables, { constants: system.parameters })));
  const evaluator = compileExpressions(derivatives, variables, { constants: system.parameters });
  const values = [
    ...point.q,
    ...(point.rates ?? new Array<number>(n).fill(0)),
    ...linearization.accelerations,
    point.t ?? 0,
    ...(point.inputs ?? new Array<number>(m).fill(0)),
    ...multipliers.map((multiplier) => multiplier.value),
  ];
  const out = new Float64Array(derivatives.length);
  evaluator.evaluate(values, out);
  const stride = 3 * n + m + l;
  // With constraints the state is [z; z'] over the independent coordinates and δq = N δz
  // (δq' = N δz', δq'' = N δz'' at rest); without, N is the identity.
  const basis = linearization.basis ?? names.map((_, i) => names.map((__, j) => (i === j ? 1 : 0)));
  const r = basis[0]?.length ?? 0;
  const through = (row: readonly number[]) => Array.from({ length: r }, (_, j) => row.reduce((sum, x, i) => sum + x * basis[i]![j]!, 0));
  const C: number[][] = [];
  const D: number[][] = [];
  outputs.forEach((_, k) => {
    const base = k * stride;
    const byCoordinate = through(Array.from({ length: n }, (_, i) => out[base + i]!));
    const byRate = through(Array.from({ length: n }, (_, i) => out[base + n + i]!));
    const byAcceleration = through(Array.from({ length: n }, (_, i) => out[base + 2 * n + i]!));
    const byInput = Array.from({ length: m }, (_, j) => out[base + 3 * n + j]!);
    const byMultiplier = Array.from({ length: l }, (_, j) => out[base + 3 * n + m + j]!);
    const rows = linearization.multiplierRows;
    C.push(
      [...byCoordinate, ...byRate].map(
        (x, j) =>
          x +
          byAcceleration.reduce((sum, a, i) => sum + a * linearization.A[r + i]![j]!, 0) +
          byMultiplier.reduce((sum, a, i) => sum + a * rows!.byState[i]![j]!, 0),
      ),
    );
    D.push(
      byInput.map(
        (x, j) =>
          x +
          byAcceleration.reduce((sum, a, i) => sum + a * linearization.B[r + i]![j]!, 0) +
          byMultiplier.reduce((sum, a, i) => sum + a * rows!.byInput[i]![j]!, 0),
      ),
    );
  });
  return { state: linearization.state, inputs: linearization.inputs, outputs: outputs.map((o) => o.name), A: linearization.A, B: linearization.B, C, D };
}

/**
 * Poles (eigenvalues of A) with natural frequency |p| and damping ratio
 * −Re p/|p|, sorted by natural frequency, then imaginary part.
 *
 * @example polesOf([[0, 1], [-4, -0.4]]) // two poles with naturalFrequency 2, dampingRatio 0.1
 */
export function polesOf(A: readonly (readonly number[])[]): PoleInfo[] {
  return eigenvalues(A)
    .map((pole) => {
      const naturalFrequency = Math.hypot(pole.re, pole.im);
      return { pole, naturalFrequency, dampingRatio: naturalFrequency === 0 ? null : -pole.re / naturalFrequency };
    })
    .sort((a, b) => a.naturalFrequency - b.naturalFrequency || a.pole.im - b.pole.im);
}

/**
 * Transmission zeros of one input–output pair (SISO). With D ≠ 0 they are
 * the eigenvalues of A − B D⁻¹ C. With D = 0 and relative degree r (the first
 * nonzero Markov parameter C A^(r−1) B), the projector
 * P = I − B (C A^(r−1) B)⁻¹ C A^(r−1) makes P A have the zeros and r
 * eigenvalues at 0 (its action on the output and its first r − 1 rates is a
 * shift), so the r smallest eigenvalues are dropped. Not available when the
 * output does not respond to the input at all.
 */
export function transmissionZeros(ss: StateSpace, input: number | string, output: number | string): ZerosResult {
  const i = indexOf(ss.inputs, input, "input");
  const o = indexOf(ss.outputs, output, "output");
  const n = ss.A.length;
  const b = ss.B.map((row) => row[i]!);
  const c = ss.C[o]!;
  const d = ss.D[o]![i]!;
  const A = new Matrix(ss.A.map((row) => [...row]));
  const scaleA = Math.max(1e-300, norm(ss.A.flat()));
  const scale = norm(c) * norm(b);
  if (scale === 0 && d === 0) return { available: false, reason: `${ss.outputs[o]} does not respond to ${ss.inputs[i]} (the transfer function is zero)` };
  if (d !== 0 && Math.abs(d) > 1e-12 * scale) {
    const reduced = A.sub(Matrix.columnVector(b).mmul(Matrix.rowVector(c)).div(d));
    return { available: true, zeros: cleanup(eigenvalues(reduced.to2DArray())) };
  }
  let row = Matrix.rowVector(c);
  for (let r = 1; r <= n; r++) {
    const markov = row.mmul(Matrix.columnVector(b)).get(0, 0);
    if (Math.abs(markov) > 1e-10 * scale * Math.pow(scaleA, r - 1)) {
      const projector = Matrix.eye(n).sub(Matrix.columnVector(b).mmul(row).div(markov));
      const all = eigenvalues(projector.mmul(A).to2DArray());
      all.sort((x, y) => Math.hypot(x.re, x.im) - Math.hypot(y.re, y.im));
      return { available: true, zeros: cleanup(all.slice(r)) };
    }
    row = row.mmul(A);
  }
  return { available: false, reason: `${ss.outputs[o]} does not respond to ${ss.inputs[i]} (the transfer function is zero)` };
}

/**
 * Bode data from one input to one output: H(jω) = C (jωI − A)⁻¹ B + D,
 * solved as the real system [−A −ωI; ωI −A][Re x; Im x] = [B; 0] at each ω.
 *
 * @example frequencyResponse(ss, { input: 0, output: 0, from: 0.1, to: 100, points: 200 }).magnitudeDb
 */
export function frequencyResponse(ss: StateSpace, options: FrequencyResponseOptions): FrequencyResponse {
  const i = indexOf(ss.inputs, options.input, "input");
  const o = indexOf(ss.outputs, options.output, "output");
  const n = ss.A.length;
  const poles = polesOf(ss.A);
  const frequencies = options.frequencies ? [...options.frequencies] : logSpaced(poles, options);
  if (frequencies.some((w) => !(w > 0) || !Number.isFinite(w))) throw new RangeError("frequencies must be positive and finite");
  const b = ss.B.map((row) => row[i]!);
  const c = ss.C[o]!;
  const d = ss.D[o]![i]!;
  const magnitudeDb: number[] = [];
  const phaseDeg: number[] = [];
  let previous: number | null = null;
  for (const w of frequencies) {
    const K = Matrix.zeros(2 * n, 2 * n);
    for (let r = 0; r < n; r++) {
      for (let k = 0; k < n; k++) {
        K.set(r, k, -ss.A[r]![k]!);
        K.set(n + r, n + k, -ss.A[r]![k]!);
      }
      K.set(r, n + r, -w);
      K.set(n + r, r, w);
    }
    const rhs = Matrix.columnVector([...b, ...new Array<number>(n).fill(0)]);
    let re = d;
    let im = 0;
    const lu = new LuDecomposition(K);
    if (lu.isSingular()) {
      magnitudeDb.push(Infinity);
      phaseDeg.push(previous ?? Number.NaN);
      continue;
    }
    const x = lu.solve(rhs).to1DArray();
    for (let k = 0; k < n; k++) {
      re += c[k]! * x[k]!;
      im += c[k]! * x[n + k]!;
    }
    const magnitude = Math.hypot(re, im);
    magnitudeDb.push(magnitude === 0 ? -Infinity : 20 * Math.log10(magnitude));
    let phase = (Math.atan2(im, re) * 180) / Math.PI;
    if (previous !== null && Number.isFinite(previous)) phase += 360 * Math.round((previous - phase) / 360);
    phaseDeg.push(phase);
    previous = phase;
  }
  return { input: ss.inputs[i]!, output: ss.outputs[o]!, frequencies, magnitudeDb, phaseDeg, poles, zeros: transmissionZeros(ss, i, o) };
}

/** The state-space matrices as JSON, CSV (long form: matrix,row,column,value) or code in an export language. */
export function exportStateSpace(ss: StateSpace, format: StateSpaceFormat, title = "state space"): string {
  const matrices: [string, number[][], string[], string[]][] = [
    ["A", ss.A, ss.state, ss.state],
    ["B", ss.B, ss.state, ss.inputs],
    ["C", ss.C, ss.outputs, ss.state],
    ["D", ss.D, ss.outputs, ss.inputs],
  ];
  for (const [, M] of matrices) if (M.flat().some((x) => !Number.isFinite(x))) throw new RangeError("the matrices hold a value that is not finite");
  const header = [
    `${title}: x' = A x + B u, y = C x + D u, linearized about an operating point; exported by Holonomy.`,
    `state x: ${ss.state.join(", ") || "(none)"}; inputs u: ${ss.inputs.join(", ") || "(none)"}; outputs y: ${ss.outputs.join(", ") || "(none)"}.`,
    safetyNote,
  ];
  switch (format) {
    case "json":
      return `${JSON.stringify({ state: ss.state, inputs: ss.inputs, outputs: ss.outputs, A: ss.A, B: ss.B, C: ss.C, D: ss.D }, null, 2)}\n`;
    case "csv": {
      const quote = (text: string) => (/[",\n]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text);
      const lines = ["matrix,row,column,value"];
      for (const [name, M, rows, cols] of matrices)
        M.forEach((row, r) => row.forEach((x, k) => lines.push(`${name},${quote(rows[r]!)},${quote(cols[k]!)},${x}`)));
      return `${lines.join("\n")}\n`;
    }
    case "python": {
      const tuple = (names: string[]) => `(${names.map((x) => JSON.stringify(x)).join(", ")}${names.length === 1 ? "," : ""})`;
      const array = (M: number[][], rows: number, cols: number) =>
        rows === 0 || cols === 0
          ? `np.zeros((${rows}, ${cols}))`
          : `np.array([\n${M.map((row) => `    [${row.map(doubleLiteral).join(", ")}],`).join("\n")}\n], dtype=float)`;
      return `${header.map((l) => `# ${l}`).join("\n")}
import numpy as np

STATE = ${tuple(ss.state)}
INPUTS = ${tuple(ss.inputs)}
OUTPUTS = ${tuple(ss.outputs)}
${matrices.map(([name, M, rows, cols]) => `${name} = ${array(M, rows.length, cols.length)}`).join("\n")}
`;
    }
    case "julia":
    case "matlab": {
      const comment = format === "julia" ? "#" : "%";
      const array = (M: number[][], rows: number, cols: number) =>
        rows === 0 || cols === 0 ? `zeros(${rows}, ${cols})` : `[${M.map((row) => row.map(doubleLiteral).join(" ")).join("; ")}]`;
      const names = (list: string[]) =>
        format === "julia" ? `[${list.map((x) => JSON.stringify(x)).join(", ")}]` : `{${list.map((x) => `'${x.replace(/'/g, "''")}'`).join(", ")}}`;
      const end = format === "julia" ? "" : ";";
      const prefix = format === "julia" ? "const " : "";
      return `${header.map((l) => `${comment} ${l}`).join("\n")}
${prefix}STATE = ${names(ss.state)}${end}
${prefix}INPUTS = ${names(ss.inputs)}${end}
${prefix}OUTPUTS = ${names(ss.outputs)}${end}
${matrices.map(([name, M, rows, cols]) => `${prefix}${name} = ${array(M, rows.length, cols.length)}${end}`).join("\n")}
`;
    }
    case "typescript": {
      const literal = (x: number) => String(x);
      return `${header.map((l) => `// ${l}`).join("\n")}
export const STATE: readonly string[] = ${JSON.stringify(ss.state)};
export const INPUTS: readonly string[] = ${JSON.stringify(ss.inputs)};
export const OUTPUTS: readonly string[] = ${JSON.stringify(ss.outputs)};
${matrices.map(([name, M]) => `export const ${name}: readonly (readonly number[])[] = [${M.map((row) => `[${row.map(literal).join(", ")}]`).join(", ")}];`).join("\n")}
`;
    }
    case "c": {
      const lines = [`/* ${header.join("\n * ")} */`, "/* Matrices are row-major: entry (i, j) of an r×c matrix is X[i*c + j]. */"];
      lines.push(`#define STATE_SIZE ${ss.state.length}`, `#define INPUT_SIZE ${ss.inputs.length}`, `#define OUTPUT_SIZE ${ss.outputs.length}`);
      for (const [name, M, rows, cols] of matrices) {
        if (rows.length === 0 || cols.length === 0) lines.push(`/* ${name} is ${rows.length}×${cols.length}: empty. */`);
        else lines.push(`static const double ${name}[${rows.length * cols.length}] = {${M.flat().map(doubleLiteral).join(", ")}};`);
      }
      return `${lines.join("\n")}\n`;
    }
  }
  throw new RangeError(`unknown format "${String(format)}"`);
}

function indexOf(list: readonly string[], key: number | string, what: string): number {
  const index = typeof key === "number" ? key : list.indexOf(key);
  if (!Number.isInteger(index) || index < 0 || index >= list.length) throw new RangeError(`no ${what} ${JSON.stringify(key)}`);
  return index;
}

function eigenvalues(A: readonly (readonly number[])[]): Complex[] {
  if (A.length === 0) return [];
  const decomposition = new EigenvalueDecomposition(new Matrix(A.map((row) => [...row])));
  return decomposition.realEigenvalues.map((re, k) => ({ re, im: decomposition.imaginaryEigenvalues[k]! }));
}

function cleanup(values: Complex[]): Complex[] {
  const scale = Math.max(1, ...values.map((z) => Math.hypot(z.re, z.im)));
  return values
    .map((z) => ({ re: Math.abs(z.re) < 1e-12 * scale ? 0 : z.re, im: Math.abs(z.im) < 1e-9 * scale ? 0 : z.im }))
    .sort((a, b) => a.re - b.re || a.im - b.im);
}

function norm(v: readonly number[]): number {
  return Math.hypot(...v);
}

/** `points` log-spaced frequencies; by default a decade below the slowest nonzero pole to a decade above the fastest. */
function logSpaced(poles: readonly PoleInfo[], options: FrequencyResponseOptions): number[] {
  const nonzero = poles.map((p) => p.naturalFrequency).filter((w) => w > 1e-9);
  const from = options.from ?? (nonzero.length > 0 ? Math.min(...nonzero) / 10 : 0.01);
  const to = options.to ?? (nonzero.length > 0 ? Math.max(...nonzero) * 10 : 100);
  const points = options.points ?? 200;
  if (!(from > 0) || !(to > from) || !Number.isInteger(points) || points < 2) throw new RangeError("need 0 < from < to and at least 2 points");
  return Array.from({ length: points }, (_, k) => from * Math.pow(to / from, k / (points - 1)));
}
