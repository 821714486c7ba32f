import type { ExpressionGraph, GraphOp } from "../graph";
import { assembleFunctions, ByteWriter, F64, I32, OP } from "./emit";
import { emitTrigFunctions, type TrigFunctions, type TrigTypes } from "./trig";

/**
 * Compiles the part of an expression graph that `roots` need into a
 * WebAssembly module, byte by byte from the graph's nodes (each of a
 * whitelisted operation; the graph comes only from validated trees). No
 * program text is produced: the bytes go straight to `WebAssembly.Module`.
 *
 * The module owns one memory laid out as
 *
 *     [ variables (nv f64) | outputs (roots.length f64) ]
 *
 * and exports `run()`, which reads the variables and writes every output.
 * Arithmetic and √, |x| are native f64 instructions; sine and cosine are
 * functions of the module (trig.ts: the algorithm of the engine's own Math.sin
 * and Math.cos, bit for bit, without leaving WebAssembly at each call); the
 * other functions are imports of the host's Math. The tape evaluator calls
 * Math, so the two agree to the last bit.
 */
export interface WasmKernel {
  /** Write the variable values here (a view of the module's memory). */
  readonly input: Float64Array;
  /** Read the outputs here after `run()`. */
  readonly output: Float64Array;
  readonly run: () => void;
  /** Size of the module in bytes. */
  readonly byteLength: number;
  /** What the module was generated from, for callers that generate a larger module around it. */
  readonly source: { readonly graph: ExpressionGraph; readonly roots: readonly number[]; readonly variableCount: number };
}

export type ImportedOp = Exclude<GraphOp, "const" | "var" | "add" | "sub" | "mul" | "div" | "neg" | "square" | "cube" | "sqrt" | "abs">;

const IMPORTED: Record<ImportedOp, { math: (...args: number[]) => number; arity: 1 | 2 }> = {
  pow: { math: Math.pow, arity: 2 },
  sin: { math: Math.sin, arity: 1 },
  cos: { math: Math.cos, arity: 1 },
  tan: { math: Math.tan, arity: 1 },
  exp: { math: Math.exp, arity: 1 },
  log: { math: Math.log, arity: 1 },
  sinh: { math: Math.sinh, arity: 1 },
  cosh: { math: Math.cosh, arity: 1 },
  tanh: { math: Math.tanh, arity: 1 },
  asin: { math: Math.asin, arity: 1 },
  acos: { math: Math.acos, arity: 1 },
  atan: { math: Math.atan, arity: 1 },
};

const NATIVE_BINARY: Partial<Record<GraphOp, number>> = { add: OP.f64Add, sub: OP.f64Sub, mul: OP.f64Mul, div: OP.f64Div };
const NATIVE_UNARY: Partial<Record<GraphOp, number>> = { neg: OP.f64Neg, sqrt: OP.f64Sqrt, abs: OP.f64Abs };

/** The host functions behind the imports, keyed by field name. */
export function mathImports(imports: readonly ImportedOp[]): Record<string, (...args: number[]) => number> {
  const math: Record<string, (...args: number[]) => number> = {};
  for (const op of imports) math[op] = IMPORTED[op].math;
  return math;
}

/** The import's type in a module whose types 1 and 2 are (f64) → f64 and (f64, f64) → f64. */
export function importArity(op: ImportedOp): 1 | 2 {
  return IMPORTED[op].arity;
}

/** Functions above this many instructions stay on the tape (engines limit a function's size and locals). */
export const WASM_MAX_INSTRUCTIONS = 200_000;

/** True when this JavaScript engine offers synchronous WebAssembly compilation. */
export function wasmAvailable(): boolean {
  return typeof WebAssembly === "object" && typeof WebAssembly.Module === "function" && typeof WebAssembly.Instance === "function";
}

/** The body of a function that evaluates the graph's roots, and the imports it calls (function indices 0 … imports.length − 1). */
export interface GraphFunction {
  /** The body without the final `end`; it takes no parameters and returns nothing. */
  code: Uint8Array;
  /** f64 locals the body uses. */
  locals: number;
  imports: ImportedOp[];
}

/**
 * Emits the code that reads the variables from memory [0, 8·variableCount)
 * and writes root j to the f64 right after them (address 8·(variableCount + j)).
 */
export function emitGraphFunction(
  graph: ExpressionGraph,
  roots: readonly number[],
  variableCount: number,
  /**
   * Function index to call for an imported operation instead of its import (a
   * function of the module itself); for "sincos", a function returning sine and
   * cosine of one argument, used where the graph needs both.
   */
  native: (op: ImportedOp | "sincos", importCount: number) => number | undefined = () => undefined,
): GraphFunction {
  const order = graph.reachable(roots);
  const nodes = graph.nodes;
  const isLeaf = (op: GraphOp) => op === "var" || op === "const";

  // Imports: one function per imported operation actually used.
  const imports: ImportedOp[] = [];
  const importIndex = new Map<GraphOp, number>();
  for (const id of order) {
    const op = nodes[id]!.op;
    if (op in IMPORTED && !importIndex.has(op)) {
      importIndex.set(op, imports.length);
      imports.push(op as ImportedOp);
    }
  }

  // Last use of each instruction's value (position in `order`); roots live to the end.
  const position = new Int32Array(nodes.length).fill(-1);
  order.forEach((id, p) => (position[id] = p));
  const lastUse = new Int32Array(nodes.length).fill(-1);
  for (const id of order) {
    const node = nodes[id]!;
    if (isLeaf(node.op)) continue;
    if (node.a >= 0) lastUse[node.a] = position[id]!;
    if (node.b >= 0) lastUse[node.b] = position[id]!;
  }
  for (const root of roots) lastUse[root] = order.length;

  // Locals are reused once a value is dead (a linear scan over the topological order).
  const local = new Int32Array(nodes.length).fill(-1);
  const free: number[] = [];
  let localCount = 0;
  const code = new ByteWriter();
  const operand = (id: number) => {
    const node = nodes[id]!;
    if (node.op === "var")
      code
        .byte(OP.i32Const)
        .i32(0)
        .byte(OP.f64Load)
        .u32(3)
        .u32(8 * node.a);
    else if (node.op === "const") code.byte(OP.f64Const).f64(node.value);
    else code.byte(OP.localGet).u32(local[id]!);
  };
  const release = (id: number, p: number) => {
    if (id >= 0 && !isLeaf(nodes[id]!.op) && lastUse[id] === p && local[id]! >= 0) {
      free.push(local[id]!);
      local[id] = -2; // released (a second operand slot naming the same node must not free it twice)
    }
  };
  // Sine and cosine of the same argument are computed together where the module can (one reduction).
  const partner = new Map<number, number>();
  const sineOf = new Map<number, number>();
  const cosineOf = new Map<number, number>();
  for (const id of order) {
    const node = nodes[id]!;
    if (node.op === "sin") sineOf.set(node.a, id);
    else if (node.op === "cos") cosineOf.set(node.a, id);
  }
  for (const [argument, sine] of sineOf) {
    const cosine = cosineOf.get(argument);
    if (cosine === undefined) continue;
    partner.set(sine, cosine);
    partner.set(cosine, sine);
  }
  const sincos = partner.size > 0 ? native("sincos", imports.length) : undefined;
  const computedWithPartner = new Uint8Array(nodes.length);
  const allocate = () => (free.length > 0 ? free.pop()! : localCount++);
  order.forEach((id, p) => {
    const node = nodes[id]!;
    if (isLeaf(node.op)) return;
    const op = node.op;
    if (computedWithPartner[id]) {
      release(node.a, p);
      return;
    }
    if (sincos !== undefined && partner.has(id)) {
      const other = partner.get(id)!;
      operand(node.a);
      code.byte(OP.call).u32(sincos);
      release(node.a, p);
      const [sine, cosine] = op === "sin" ? [id, other] : [other, id];
      // The call leaves sine, then cosine (on top).
      local[cosine] = allocate();
      code.byte(OP.localSet).u32(local[cosine]!);
      local[sine] = allocate();
      code.byte(OP.localSet).u32(local[sine]!);
      computedWithPartner[other] = 1;
      return;
    }
    if (op === "square") {
      operand(node.a);
      operand(node.a);
      code.byte(OP.f64Mul);
    } else if (op === "cube") {
      operand(node.a);
      operand(node.a);
      code.byte(OP.f64Mul);
      operand(node.a);
      code.byte(OP.f64Mul);
    } else if (NATIVE_BINARY[op] !== undefined) {
      operand(node.a);
      operand(node.b);
      code.byte(NATIVE_BINARY[op]);
    } else if (NATIVE_UNARY[op] !== undefined) {
      operand(node.a);
      code.byte(NATIVE_UNARY[op]);
    } else {
      const imported = importIndex.get(op);
      if (imported === undefined) throw new Error(`no WebAssembly form for "${op}"`);
      const index = native(op as ImportedOp, imports.length) ?? imported;
      operand(node.a);
      if (IMPORTED[op as ImportedOp].arity === 2) operand(node.b);
      code.byte(OP.call).u32(index);
    }
    release(node.a, p);
    if (node.b !== node.a) release(node.b, p);
    const slot = allocate();
    local[id] = slot;
    code.byte(OP.localSet).u32(slot);
  });
  roots.forEach((root, j) => {
    code.byte(OP.i32Const).i32(0);
    operand(root);
    code
      .byte(OP.f64Store)
      .u32(3)
      .u32(8 * (variableCount + j));
  });

  return { code: code.toBytes(), locals: localCount, imports };
}

/** The module's bytes (exported for tests, which validate them). */
export function emitGraphModule(graph: ExpressionGraph, roots: readonly number[], variableCount: number): { bytes: Uint8Array; imports: ImportedOp[] } {
  // Functions: imports, then run, then sine and cosine when the graph uses them.
  const made: { trig?: TrigFunctions } = {};
  const {
    code,
    locals: localCount,
    imports,
  } = emitGraphFunction(graph, roots, variableCount, (op, importCount) => {
    if (op !== "sin" && op !== "cos" && op !== "sincos") return undefined;
    made.trig ??= nativeTrig(graph, roots, importCount + 1, STANDARD_TYPES);
    return made.trig[op];
  });
  const extra = made.trig;
  const bytesNeeded = 8 * (variableCount + roots.length);
  const bytes = assembleFunctions({
    types: STANDARD_TYPES.list,
    imports: imports.map((op) => ({ field: op, type: IMPORTED[op].arity === 2 ? STANDARD_TYPES.binary : STANDARD_TYPES.unary })),
    functions: [
      { type: STANDARD_TYPES.none, locals: localCount > 0 ? [{ count: localCount, type: F64 }] : [], code, export: "run" },
      ...(extra?.functions ?? []),
    ],
    memoryPages: Math.max(1, Math.ceil(bytesNeeded / 65536)),
  });
  return { bytes, imports };
}

/**
 * The function types every generated module declares (unused ones cost a few
 * bytes), so that helpers such as the sine and cosine can name them.
 */
export const STANDARD_TYPES = {
  list: [
    { params: [], results: [] },
    { params: [F64], results: [F64] },
    { params: [F64, F64], results: [F64] },
    { params: [F64, F64, I32], results: [F64] },
    { params: [F64], results: [F64, F64] },
  ],
  none: 0,
  unary: 1,
  binary: 2,
  kernelSin: 3,
  pair: 4,
};

/**
 * The native sine and cosine for the ones the graph uses, to be placed at
 * `first`, `first + 1`, …; the graph's imports of sin and cos stay for their
 * large-argument fallback.
 */
export function nativeTrig(graph: ExpressionGraph, roots: readonly number[], first: number, types: TrigTypes): TrigFunctions {
  const imports = graphImports(graph, roots);
  const sin = imports.indexOf("sin");
  const cos = imports.indexOf("cos");
  return emitTrigFunctions(first, { ...(sin >= 0 ? { sin } : {}), ...(cos >= 0 ? { cos } : {}) }, types);
}

/** The imported operations the graph's roots use, in the order emitGraphFunction numbers them. */
export function graphImports(graph: ExpressionGraph, roots: readonly number[]): ImportedOp[] {
  const imports: ImportedOp[] = [];
  for (const id of graph.reachable(roots)) {
    const op = graph.nodes[id]!.op;
    if (op in IMPORTED && !imports.includes(op as ImportedOp)) imports.push(op as ImportedOp);
  }
  return imports;
}

/**
 * The graph's roots as a WebAssembly kernel, or null when WebAssembly is
 * unavailable here, the graph is too large, or the engine refuses the module
 * (a browser's main thread limits synchronous compilation, a policy may forbid
 * it); the caller then keeps the tape evaluator.
 */
export function compileGraphToWasm(graph: ExpressionGraph, roots: readonly number[], variableCount: number): WasmKernel | null {
  if (!wasmAvailable()) return null;
  if (graph.reachable(roots).length > WASM_MAX_INSTRUCTIONS) return null;
  try {
    const { bytes, imports } = emitGraphModule(graph, roots, variableCount);
    const math = mathImports(imports);
    const compiled = new WebAssembly.Module(bytes as Uint8Array<ArrayBuffer>);
    const instance = new WebAssembly.Instance(compiled, { m: math });
    const memory = instance.exports.memory as WebAssembly.Memory;
    const run = instance.exports.run as () => void;
    return {
      input: new Float64Array(memory.buffer, 0, variableCount),
      output: new Float64Array(memory.buffer, 8 * variableCount, roots.length),
      run,
      byteLength: bytes.length,
      source: { graph, roots, variableCount },
    };
  } catch {
    // CompileError, LinkError, or a RangeError from a size limit: fall back.
    return null;
  }
}
