import type { ExpressionGraph, GraphOp } from "../graph";
import { assembleModule, ByteWriter, F64, OP } from "./emit";

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
 * Arithmetic and √, |x| are native f64 instructions; the other functions are
 * imports of the host's Math (the same functions the tape evaluator calls, so
 * the two agree to the last bit).
 */
export interface WasmKernel {
  /** Write the variable values here (a view of the module's memory). */
  readonly input: Float64Array;
  /** Read the outputs here after `run()`. */
  readonly output: Float64Array;
  readonly run: () => void;
  /** Size of the module in bytes. */
  readonly byteLength: number;
}

type ImportedOp = Exclude<GraphOp, "const" | "var" | "add" | "sub" | "mul" | "div" | "neg" | "square" | "cube" | "sqrt" | "abs">;

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

/** Functions above this many instructions stay on the tape (engines limit a function's size and locals). */
export const WASM_MAX_INSTRUCTIONS = 200_000;

/** True when this JavaScript engine offers synchronous WebAssembly compilation. */
export function wasmAvailable(): boolean {
  return typeof WebAssembly === "object" && typeof WebAssembly.Module === "function" && typeof WebAssembly.Instance === "function";
}

/** The module's bytes (exported for tests, which validate them). */
export function emitGraphModule(graph: ExpressionGraph, roots: readonly number[], variableCount: number): { bytes: Uint8Array; imports: ImportedOp[] } {
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
  order.forEach((id, p) => {
    const node = nodes[id]!;
    if (isLeaf(node.op)) return;
    const op = node.op;
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
      const index = importIndex.get(op);
      if (index === undefined) throw new Error(`no WebAssembly form for "${op}"`);
      operand(node.a);
      if (IMPORTED[op as ImportedOp].arity === 2) operand(node.b);
      code.byte(OP.call).u32(index);
    }
    release(node.a, p);
    if (node.b !== node.a) release(node.b, p);
    const slot = free.length > 0 ? free.pop()! : localCount++;
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

  const bytesNeeded = 8 * (variableCount + roots.length);
  const bytes = assembleModule({
    types: [
      { params: [], results: [] },
      { params: [F64], results: [F64] },
      { params: [F64, F64], results: [F64] },
    ],
    imports: imports.map((op) => ({ field: op, type: IMPORTED[op].arity === 2 ? 2 : 1 })),
    body: { type: 0, locals: localCount, code: code.toBytes() },
    memoryPages: Math.max(1, Math.ceil(bytesNeeded / 65536)),
  });
  return { bytes, imports };
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
    const math: Record<string, (...args: number[]) => number> = {};
    for (const op of imports) math[op] = IMPORTED[op].math;
    const compiled = new WebAssembly.Module(bytes as Uint8Array<ArrayBuffer>);
    const instance = new WebAssembly.Instance(compiled, { m: math });
    const memory = instance.exports.memory as WebAssembly.Memory;
    const run = instance.exports.run as () => void;
    return {
      input: new Float64Array(memory.buffer, 0, variableCount),
      output: new Float64Array(memory.buffer, 8 * variableCount, roots.length),
      run,
      byteLength: bytes.length,
    };
  } catch {
    // CompileError, LinkError, or a RangeError from a size limit: fall back.
    return null;
  }
}
