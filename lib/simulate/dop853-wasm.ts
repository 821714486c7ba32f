import { emitGraphFunction, importArity, mathImports, nativeTrig, WASM_MAX_INSTRUCTIONS, wasmAvailable, type ImportedOp } from "../mechanics/wasm/compile-wasm";
import type { TrigFunctions } from "../mechanics/wasm/trig";
import { assembleFunctions, CodeWriter, F64, I32, OP } from "../mechanics/wasm/emit";
import type { ExpressionGraph } from "../mechanics/graph";
import { DEFAULT_SINGULAR_TOLERANCE } from "../numeric/linear-solve";
import { A, B, C, D, E3, E5 } from "./dop853-coefficients";

/**
 * A whole DOP853 step in one WebAssembly module, generated from the system's
 * expression graph for its size n: the stages, the error estimate, the
 * acceptance bookkeeping and the dense-output coefficients, with the
 * right-hand side (M and f from the graph, then M q'' = f solved by
 * elimination) called between stages inside the module. The JavaScript solver
 * (dop853.ts) keeps the step-size control and calls three exports per step
 * instead of one JavaScript right-hand side per stage.
 *
 * The arithmetic is the JavaScript solver's, operation for operation (the
 * same coefficients, the same order of additions; WebAssembly's f64 is IEEE
 * 754 double with no fused operations), so the two paths take the same steps
 * up to the linear solve, which here eliminates without row exchanges. That
 * is stable for a symmetric positive definite matrix, which a mass matrix is;
 * the module is only built when M's graph is symmetric, and a pivot that is
 * not clearly positive, a non-finite entry or a non-finite acceleration makes
 * a call return a non-zero status: the JavaScript solver then redoes that step
 * on its own path, which pivots, and reports the failure in its own words.
 *
 * The solver's arrays (y, the stages, the dense-output coefficients) are views
 * of the module's memory, so the two paths share them without copies.
 */
export interface Dop853Kernel {
  /** State of size N = 2n: [q, q']. */
  readonly y: Float64Array;
  readonly yNew: Float64Array;
  readonly stage: Float64Array;
  /** Stages 0 … 15, stage s at [s·N, (s + 1)·N). */
  readonly K: Float64Array;
  readonly fOld: Float64Array;
  /** The eight dense-output coefficient vectors. */
  readonly cont: readonly Float64Array[];
  /**
   * Stages 1 … 11 from y and stage 0, then yNew and the error norm of
   * dop853.f; −1 when a right-hand side could not be evaluated here.
   */
  step(x: number, h: number, relativeTolerance: number, absoluteTolerance: number): number;
  /** Stage 12 at (xNew, yNew), then y ← yNew, stage 0 ← stage 12 (keeping the old y and stage 0); 0 on success. */
  accept(xNew: number): number;
  /** Stages 13 … 15 and the dense-output coefficients of the accepted step [xOld, xOld + h]; 0 on success. */
  dense(xOld: number, h: number): number;
  /** Called with t before each right-hand side when the system has inputs: write them into `variables`. */
  setInputs(write: ((t: number) => void) | null): void;
  /** The module's packed variables [q, q', t, u]. */
  readonly variables: Float64Array;
}

/** What the module is generated from: the graph of [M row-major, f] over the variables [q, q', t, u]. */
export interface StepKernelSource {
  readonly graph: ExpressionGraph;
  /** n² + n roots: M row-major, then f. */
  readonly roots: readonly number[];
  readonly variableCount: number;
  /** Number of coordinates n. */
  readonly n: number;
  /** Number of inputs (their slots follow t). */
  readonly inputCount: number;
  readonly singularTolerance?: number;
}

/** Above this many coordinates the unrolled elimination grows large; the solver keeps its JavaScript path. */
export const STEP_KERNEL_MAX_COORDINATES = 24;

const STAGES = 12;

/** True when M's graph is symmetric: hash-consing gives equal entries the same node. */
function symmetricMassMatrix(roots: readonly number[], n: number): boolean {
  for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) if (roots[i * n + j] !== roots[j * n + i]) return false;
  return true;
}

/** The module's bytes and memory layout (exported for tests, which validate them). */
export function emitStepModule(source: StepKernelSource): { bytes: Uint8Array; imports: string[]; layout: StepLayout } {
  const { graph, roots, variableCount: nv, n, inputCount } = source;
  const N = 2 * n;
  const nn = n * n;
  // Functions: imports, run, rhs, step, accept, dense, then the module's own sine and cosine.
  const made: { trig?: TrigFunctions } = {};
  const graphFn = emitGraphFunction(graph, roots, nv, (op, importCount) => {
    if (op !== "sin" && op !== "cos" && op !== "sincos") return undefined;
    const first = importCount + (inputCount > 0 ? 1 : 0) + 5;
    made.trig ??= nativeTrig(graph, roots, first, { unary: 1, binary: 2, kernelSin: 8, pair: 9 });
    return made.trig[op];
  });
  const layout = stepLayout(nv, n);
  const { Y, YNEW, STAGE, K, FOLD, CONT } = layout;
  const O = nv;
  const kSlot = (s: number, i: number) => K + s * N + i;

  // Imports: the graph's Math functions (indices 0 … k−1), then the inputs callback.
  const imports: { field: string; type: number }[] = graphFn.imports.map((op) => ({ field: op as string, type: importArity(op) }));
  if (inputCount > 0) imports.push({ field: "inputs", type: 3 });
  const base = imports.length;
  const RUN = base;
  const RHS = base + 1;

  type Locals = { count: number; type: number }[];
  let rhsLocals: Locals;
  let stepLocals: Locals;
  let acceptLocals: Locals;
  let denseLocals: Locals;

  // ---- rhs(t, src, dst) → status: M q'' = f at (t, state at src), [q', q''] to dst ----
  const rhs = new CodeWriter();
  {
    const T = 0,
      SRC = 1,
      DST = 2;
    let next = 3;
    const a = Array.from({ length: nn }, () => next++);
    const b = Array.from({ length: n }, () => next++);
    const scale = next++;
    const threshold = next++;
    const factor = next++;
    const sum = next++;
    const f64Locals = next - 3;
    const bad = next++;
    for (let i = 0; i < N; i++) rhs.store(i, () => rhs.loadAt(SRC, i));
    rhs.store(N, () => rhs.get(T));
    if (inputCount > 0) rhs.get(T).call(imports.length - 1);
    rhs.call(RUN);
    for (let e = 0; e < nn; e++) {
      rhs.load(O + e).tee(a[e]!);
      rhs.op(OP.f64Abs).get(scale).op(OP.f64Max).set(scale);
    }
    for (let i = 0; i < n; i++) rhs.load(O + nn + i).set(b[i]!);
    // A non-finite entry (NaN propagates through max) or an infinite one: status 1.
    rhs.get(scale).f64(Infinity).op(OP.f64Lt).op(OP.i32Eqz);
    rhs.ifNonZero(() => rhs.i32(1).op(OP.return));
    rhs
      .get(scale)
      .f64(source.singularTolerance ?? DEFAULT_SINGULAR_TOLERANCE)
      .op(OP.f64Mul)
      .set(threshold);
    // Elimination without row exchanges; every pivot must be clearly positive.
    for (let k = 0; k < n; k++) {
      rhs
        .get(a[k * n + k]!)
        .get(threshold)
        .op(OP.f64Gt)
        .op(OP.i32Eqz);
      rhs.ifNonZero(() => rhs.i32(1).op(OP.return));
      for (let i = k + 1; i < n; i++) {
        rhs
          .get(a[i * n + k]!)
          .get(a[k * n + k]!)
          .op(OP.f64Div)
          .set(factor);
        for (let j = k + 1; j < n; j++)
          rhs
            .get(a[i * n + j]!)
            .get(factor)
            .get(a[k * n + j]!)
            .op(OP.f64Mul)
            .op(OP.f64Sub)
            .set(a[i * n + j]!);
        rhs.get(b[i]!).get(factor).get(b[k]!).op(OP.f64Mul).op(OP.f64Sub).set(b[i]!);
      }
    }
    for (let i = n - 1; i >= 0; i--) {
      rhs.get(b[i]!).set(sum);
      for (let j = i + 1; j < n; j++)
        rhs
          .get(sum)
          .get(a[i * n + j]!)
          .get(b[j]!)
          .op(OP.f64Mul)
          .op(OP.f64Sub)
          .set(sum);
      rhs
        .get(sum)
        .get(a[i * n + i]!)
        .op(OP.f64Div)
        .set(b[i]!);
    }
    // A non-finite acceleration (x − x is not 0 for NaN and ±∞): status 2.
    for (let i = 0; i < n; i++) {
      rhs.get(b[i]!).get(b[i]!).op(OP.f64Sub).f64(0).op(OP.f64Ne);
      if (i > 0) rhs.get(bad).op(OP.i32Or);
      rhs.set(bad);
    }
    rhs.get(bad).ifNonZero(() => rhs.i32(2).op(OP.return));
    for (let i = 0; i < n; i++) rhs.storeAt(DST, i, () => rhs.loadAt(SRC, n + i));
    for (let i = 0; i < n; i++) rhs.storeAt(DST, n + i, () => rhs.get(b[i]!));
    rhs.i32(0);
    rhsLocals = [
      { count: f64Locals, type: F64 },
      { count: 1, type: I32 },
    ];
  }

  /** Calls rhs(t, STAGE → stage s) with t = x + c_s·h pushed by `time`; on failure returns `failure` from the enclosing function. */
  const callRhs = (code: CodeWriter, time: () => void, src: number, dst: number, failure: () => void) => {
    time();
    code
      .i32(8 * src)
      .i32(8 * dst)
      .call(RHS);
    code.ifNonZero(() => {
      failure();
      code.op(OP.return);
    });
  };

  // ---- step(x, h, rtol, atol) → err, or −1 ----
  const step = new CodeWriter();
  {
    const X = 0,
      H = 1,
      RTOL = 2,
      ATOL = 3;
    let next = 4;
    const w = Array.from({ length: 16 }, () => next++);
    const acc = Array.from({ length: 8 }, () => next++);
    const local = () => next++;
    const [sumB, sum3, sum5, yi, nx, sk] = [local(), local(), local(), local(), local(), local()];
    const [e3, e5, err3, err5, deno] = [local(), local(), local(), local(), local()];
    const locals = next - 4;
    for (let s = 1; s < STAGES; s++) {
      const a = A[s]!;
      for (let j = 0; j < s; j++) if (a[j] !== 0) step.f64(a[j]!).get(H).op(OP.f64Mul).set(w[j]!);
      for (let i = 0; i < N; i++)
        step.store(STAGE + i, () => {
          step.load(Y + i);
          for (let j = 0; j < s; j++) {
            if (a[j] === 0) continue;
            step.get(w[j]!).load(kSlot(j, i)).op(OP.f64Mul).op(OP.f64Add);
          }
        });
      callRhs(
        step,
        () => step.get(X).f64(C[s]!).get(H).op(OP.f64Mul).op(OP.f64Add),
        STAGE,
        kSlot(s, 0),
        () => step.f64(-1),
      );
    }
    const used = [0, 5, 6, 7, 8, 9, 10, 11];
    const weighted = (weights: Float64Array, target: number) => {
      used.forEach((s, u) => {
        step.f64(weights[s]!).get(acc[u]!).op(OP.f64Mul);
        if (u > 0) step.op(OP.f64Add);
      });
      step.set(target);
    };
    for (let i = 0; i < N; i++) {
      used.forEach((s, u) => step.load(kSlot(s, i)).set(acc[u]!));
      weighted(B, sumB);
      weighted(E3, sum3);
      weighted(E5, sum5);
      step.load(Y + i).set(yi);
      step.get(yi).get(H).get(sumB).op(OP.f64Mul).op(OP.f64Add).set(nx);
      step.store(YNEW + i, () => step.get(nx));
      step.get(ATOL).get(RTOL).get(yi).op(OP.f64Abs).get(nx).op(OP.f64Abs).op(OP.f64Max).op(OP.f64Mul).op(OP.f64Add).set(sk);
      step.get(sum3).get(sk).op(OP.f64Div).set(e3);
      step.get(sum5).get(sk).op(OP.f64Div).set(e5);
      step.get(err3).get(e3).get(e3).op(OP.f64Mul).op(OP.f64Add).set(err3);
      step.get(err5).get(e5).get(e5).op(OP.f64Mul).op(OP.f64Add).set(err5);
    }
    step.get(err5).f64(0.01).get(err3).op(OP.f64Mul).op(OP.f64Add).set(deno);
    step.get(deno).f64(0).op(OP.f64Le);
    step.ifNonZero(() => step.f64(1).set(deno));
    step.get(H).op(OP.f64Abs).get(err5).op(OP.f64Mul);
    step.f64(1).f64(N).get(deno).op(OP.f64Mul).op(OP.f64Div).op(OP.f64Sqrt).op(OP.f64Mul);
    stepLocals = [{ count: locals, type: F64 }];
  }

  // ---- accept(xNew) → status ----
  const accept = new CodeWriter();
  {
    const XNEW = 0;
    const status = 1;
    accept
      .get(XNEW)
      .i32(8 * YNEW)
      .i32(8 * kSlot(12, 0))
      .call(RHS)
      .tee(status);
    accept.ifNonZero(() => accept.get(status).op(OP.return));
    for (let i = 0; i < N; i++) {
      accept.store(CONT + i, () => accept.load(Y + i));
      accept.store(FOLD + i, () => accept.load(kSlot(0, i)));
      accept.store(Y + i, () => accept.load(YNEW + i));
      accept.store(kSlot(0, i), () => accept.load(kSlot(12, i)));
    }
    accept.i32(0);
    acceptLocals = [{ count: 1, type: I32 }];
  }

  // ---- dense(xOld, h) → status ----
  const dense = new CodeWriter();
  {
    const XOLD = 0,
      H = 1;
    let next = 2;
    const w = Array.from({ length: 16 }, () => next++);
    const dy = next++;
    const bspl = next++;
    const status = next++;
    const locals = next - 2 - 1;
    const cont = (r: number, i: number) => CONT + r * N + i;
    for (let s = 13; s < 16; s++) {
      const a = A[s]!;
      dense.f64(a[0]!).get(H).op(OP.f64Mul).set(w[0]!);
      for (let j = 1; j < s; j++) if (a[j] !== 0) dense.f64(a[j]!).get(H).op(OP.f64Mul).set(w[j]!);
      for (let i = 0; i < N; i++)
        dense.store(STAGE + i, () => {
          dense
            .load(cont(0, i))
            .get(w[0]!)
            .load(FOLD + i)
            .op(OP.f64Mul)
            .op(OP.f64Add);
          for (let j = 1; j < s; j++) {
            if (a[j] === 0) continue;
            dense.get(w[j]!).load(kSlot(j, i)).op(OP.f64Mul).op(OP.f64Add);
          }
        });
      dense.get(XOLD).f64(C[s]!).get(H).op(OP.f64Mul).op(OP.f64Add);
      dense
        .i32(8 * STAGE)
        .i32(8 * kSlot(s, 0))
        .call(RHS)
        .tee(status);
      dense.ifNonZero(() => dense.get(status).op(OP.return));
    }
    for (let i = 0; i < N; i++) {
      dense
        .load(Y + i)
        .load(cont(0, i))
        .op(OP.f64Sub)
        .set(dy);
      dense.store(cont(1, i), () => dense.get(dy));
      dense
        .get(H)
        .load(FOLD + i)
        .op(OP.f64Mul)
        .get(dy)
        .op(OP.f64Sub)
        .set(bspl);
      dense.store(cont(2, i), () => dense.get(bspl));
      dense.store(cont(3, i), () => dense.get(dy).get(H).load(kSlot(12, i)).op(OP.f64Mul).op(OP.f64Sub).get(bspl).op(OP.f64Sub));
    }
    for (let r = 0; r < 4; r++) {
      const d = D[r]!;
      dense.f64(d[0]!).get(H).op(OP.f64Mul).set(w[0]!);
      for (let s = 1; s < 16; s++) if (d[s] !== 0) dense.f64(d[s]!).get(H).op(OP.f64Mul).set(w[s]!);
      for (let i = 0; i < N; i++)
        dense.store(cont(4 + r, i), () => {
          dense
            .get(w[0]!)
            .load(FOLD + i)
            .op(OP.f64Mul);
          for (let s = 1; s < 16; s++) {
            if (d[s] === 0) continue;
            dense.get(w[s]!).load(kSlot(s, i)).op(OP.f64Mul).op(OP.f64Add);
          }
        });
    }
    dense.i32(0);
    denseLocals = [
      { count: locals, type: F64 },
      { count: 1, type: I32 },
    ];
  }

  const bytes = assembleFunctions({
    types: [
      { params: [], results: [] },
      { params: [F64], results: [F64] },
      { params: [F64, F64], results: [F64] },
      { params: [F64], results: [] },
      { params: [F64, I32, I32], results: [I32] },
      { params: [F64, F64, F64, F64], results: [F64] },
      { params: [F64], results: [I32] },
      { params: [F64, F64], results: [I32] },
      { params: [F64, F64, I32], results: [F64] },
      { params: [F64], results: [F64, F64] },
    ],
    imports,
    functions: [
      { type: 0, locals: graphFn.locals > 0 ? [{ count: graphFn.locals, type: F64 }] : [], code: graphFn.code },
      { type: 4, locals: rhsLocals, code: rhs.bytes() },
      { type: 5, locals: stepLocals, code: step.bytes(), export: "step" },
      { type: 6, locals: acceptLocals, code: accept.bytes(), export: "accept" },
      { type: 7, locals: denseLocals, code: dense.bytes(), export: "dense" },
      ...(made.trig?.functions ?? []),
    ],
    memoryPages: Math.max(1, Math.ceil((8 * layout.end) / 65536)),
  });
  return { bytes, imports: imports.map((i) => i.field), layout };
}

/** Slots (8 bytes each) of the module's memory. */
export interface StepLayout {
  readonly Y: number;
  readonly YNEW: number;
  readonly STAGE: number;
  readonly K: number;
  readonly FOLD: number;
  readonly CONT: number;
  readonly end: number;
}

function stepLayout(variableCount: number, n: number): StepLayout {
  const N = 2 * n;
  const Y = variableCount + n * n + n;
  const YNEW = Y + N;
  const STAGE = YNEW + N;
  const K = STAGE + N;
  const FOLD = K + 16 * N;
  const CONT = FOLD + N;
  return { Y, YNEW, STAGE, K, FOLD, CONT, end: CONT + 8 * N };
}

/**
 * A factory of step kernels for the source, or null when this system keeps the
 * JavaScript path (no WebAssembly here, too many coordinates, an unsymmetric
 * mass matrix, too large a graph, or a module the engine refuses). The module
 * is compiled once, on the first call; each call instantiates it anew (cheap,
 * and the engine's optimized code is shared), so that runs never share state.
 */
export function stepKernelFactory(source: StepKernelSource): (() => Dop853Kernel) | null {
  const { n, roots } = source;
  if (!wasmAvailable() || n < 1 || n > STEP_KERNEL_MAX_COORDINATES) return null;
  if (roots.length !== n * n + n || !symmetricMassMatrix(roots, n)) return null;
  if (source.graph.reachable(roots).length > WASM_MAX_INSTRUCTIONS) return null;
  let compiled: { module: WebAssembly.Module; imports: string[]; layout: StepLayout };
  try {
    const { bytes, imports, layout } = emitStepModule(source);
    compiled = { module: new WebAssembly.Module(bytes as Uint8Array<ArrayBuffer>), imports, layout };
  } catch {
    return null;
  }
  const N = 2 * n;
  return () => {
    let writeInputs: ((t: number) => void) | null = null;
    const host: Record<string, (...args: number[]) => number | void> = mathImports(compiled.imports.filter((name): name is ImportedOp => name !== "inputs"));
    if (source.inputCount > 0) host.inputs = (t: number) => writeInputs?.(t);
    const instance = new WebAssembly.Instance(compiled.module, { m: host });
    const exports = instance.exports as {
      memory: WebAssembly.Memory;
      step: Dop853Kernel["step"];
      accept: Dop853Kernel["accept"];
      dense: Dop853Kernel["dense"];
    };
    const buffer = exports.memory.buffer;
    const view = (slot: number, length: number) => new Float64Array(buffer, 8 * slot, length);
    const { Y, YNEW, STAGE, K, FOLD, CONT } = compiled.layout;
    return {
      y: view(Y, N),
      yNew: view(YNEW, N),
      stage: view(STAGE, N),
      K: view(K, 16 * N),
      fOld: view(FOLD, N),
      cont: Array.from({ length: 8 }, (_, r) => view(CONT + r * N, N)),
      step: exports.step,
      accept: exports.accept,
      dense: exports.dense,
      setInputs(write) {
        writeInputs = write;
      },
      variables: view(0, source.variableCount),
    };
  };
}
