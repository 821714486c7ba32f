import { describe, expect, it } from "vitest";
import { symbolBinder } from "@/lib/mechanics/compile";
import { expressionTree } from "@/lib/mechanics/expr/parse";
import { ExpressionGraph } from "@/lib/mechanics/graph";
import { compileGraphToWasm, emitGraphModule } from "@/lib/mechanics/wasm/compile-wasm";
import { seededRandom } from "../../simulate/models";

/**
 * A module computing [sin x, cos y]: with y = x the graph needs both of one argument and calls the
 * module's sine-and-cosine; with two variables it calls its sine and its cosine separately.
 */
function sineCosine(fused = true) {
  const graph = new ExpressionGraph();
  const bind = symbolBinder(["x", "y"]);
  const roots = ["sin(x)", fused ? "cos(x)" : "cos(y)"].map((text) => graph.fromExpr(expressionTree(text), bind));
  return { graph, roots, kernel: compileGraphToWasm(graph, roots, 2)! };
}

describe("the module's own sine and cosine", () => {
  it("are functions of the module: the host's are imported only as the fallback for large arguments", () => {
    const { graph, roots } = sineCosine();
    const { bytes, imports } = emitGraphModule(graph, roots, 2);
    expect(WebAssembly.validate(bytes as Uint8Array<ArrayBuffer>)).toBe(true);
    expect([...imports].sort()).toEqual(["cos", "sin"]);
    // run, the two kernels, sine and cosine.
    const compiled = new WebAssembly.Module(bytes as Uint8Array<ArrayBuffer>);
    expect(WebAssembly.Module.exports(compiled).map((e) => e.name)).toEqual(["run", "memory"]);
  });

  it("give Math.sin and Math.cos bit for bit, from tiny arguments to 2^19·π/2 and beyond", () => {
    // The module ports fdlibm 5.3's sin and cos, which V8 (Node.js, Chromium) uses for Math.sin and
    // Math.cos; equality to the last bit is the check that the port is faithful (the tape evaluator
    // calls Math, and the two evaluators must agree exactly).
    const fused = sineCosine(true).kernel;
    const separate = sineCosine(false).kernel;
    const random = seededRandom(20261203);
    const mismatches: number[] = [];
    const check = (x: number) => {
      for (const kernel of [fused, separate]) {
        kernel.input[0] = x;
        kernel.input[1] = x;
        kernel.run();
        if (!Object.is(kernel.output[0], Math.sin(x)) || !Object.is(kernel.output[1], Math.cos(x))) mismatches.push(x);
      }
    };
    for (const scale of [1e-9, 1e-3, 0.5, Math.PI, 3, 10, 1e3, 1e5, 8.2e5, 1e7, 1e15]) {
      for (let i = 0; i < 40_000; i++) check((2 * random() - 1) * scale);
    }
    // Branch edges of the reduction: π/4, 3π/4, π/2 (its own branch), 2^19·π/2, and their neighbours.
    const edges = [Math.PI / 4, (3 * Math.PI) / 4, Math.PI / 2, 2 ** 19 * (Math.PI / 2), 2 ** -27, 0.3, 0.78125];
    for (const edge of edges)
      for (let k = -4; k <= 4; k++) {
        const x = edge + k * Number.EPSILON * edge;
        check(x);
        check(-x);
      }
    for (let k = 1; k < 200; k++) check((k * Math.PI) / 2); // near multiples of π/2: the three-round reduction
    for (const x of [0, -0, Number.MIN_VALUE, -Number.MIN_VALUE, Infinity, -Infinity, NaN, 1e300, -1e300]) check(x);
    expect(mismatches).toEqual([]);
  });
});
