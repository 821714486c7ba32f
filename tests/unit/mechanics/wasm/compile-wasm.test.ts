import { afterEach, describe, expect, it, vi } from "vitest";
import { compileExpressions, symbolBinder } from "@/lib/mechanics/compile";
import { expressionTree } from "@/lib/mechanics/expr/parse";
import { ExpressionGraph } from "@/lib/mechanics/graph";
import { ByteWriter } from "@/lib/mechanics/wasm/emit";
import { compileGraphToWasm, emitGraphModule } from "@/lib/mechanics/wasm/compile-wasm";
import { multiplierSymbol } from "@/lib/simulate/specs";
import { outputVariables } from "@/lib/simulate/outputs";
import { layoutOf } from "@/lib/simulate/system";
import { seededRandom, templateAndDemoForms } from "../../simulate/models";

describe("the byte writer", () => {
  it("writes LEB128 integers as the WebAssembly binary format specifies", () => {
    // WebAssembly Core Specification 2.0, 5.2.2 (LEB128); the values are the worked examples of the LEB128
    // encoding in the DWARF 4 standard, 7.6 (Figures 22 and 23).
    const bytes = (write: (w: ByteWriter) => void) => {
      const w = new ByteWriter();
      write(w);
      return [...w.toBytes()];
    };
    expect(bytes((w) => w.u32(2))).toEqual([2]);
    expect(bytes((w) => w.u32(127))).toEqual([127]);
    expect(bytes((w) => w.u32(128))).toEqual([0x80, 1]);
    expect(bytes((w) => w.u32(129))).toEqual([1 + 0x80, 1]);
    expect(bytes((w) => w.u32(12857))).toEqual([57 + 0x80, 100]);
    expect(bytes((w) => w.i32(-2))).toEqual([0x7e]);
    expect(bytes((w) => w.i32(-127))).toEqual([1 + 0x80, 0x7f]);
    expect(bytes((w) => w.i32(-128))).toEqual([0 + 0x80, 0x7f]);
    expect(bytes((w) => w.i32(127))).toEqual([127 + 0x80, 0]);
    expect(bytes((w) => w.i32(-129))).toEqual([0x7f + 0x80, 0x7e]);
    expect(() => new ByteWriter().u32(-1)).toThrow(RangeError);
    // IEEE 754 binary64 of 1.0, little-endian (fact of the trade).
    expect(bytes((w) => w.f64(1))).toEqual([0, 0, 0, 0, 0, 0, 0xf0, 0x3f]);
  });
});

describe("compiling expression graphs to WebAssembly", () => {
  afterEach(() => {
    vi.unstubAllGlobals();
  });

  it("emits a module the engine validates, with Math imports only for the functions used", () => {
    const graph = new ExpressionGraph();
    const bind = symbolBinder(["x", "y"]);
    const roots = ["x^2 + sqrt(abs(y))", "sin(x)*cos(y) - x^y"].map((text) => graph.fromExpr(expressionTree(text), bind));
    const { bytes, imports } = emitGraphModule(graph, roots, 2);
    expect(WebAssembly.validate(bytes as Uint8Array<ArrayBuffer>)).toBe(true);
    expect([...imports].sort()).toEqual(["cos", "pow", "sin"]);
    const kernel = compileGraphToWasm(graph, roots, 2)!;
    kernel.input.set([0.7, 1.9]);
    kernel.run();
    // Hand calculation with the same Math functions.
    expect(kernel.output[0]).toBe(0.7 * 0.7 + Math.sqrt(Math.abs(1.9)));
    expect(kernel.output[1]).toBe(Math.sin(0.7) * Math.cos(1.9) - Math.pow(0.7, 1.9));
  });

  it("gives every function of the whitelist the tape's value, edge cases included", () => {
    const texts = [
      "sin(x)",
      "cos(x)",
      "tan(x)",
      "exp(x)",
      "log(x)",
      "sqrt(x)",
      "abs(x)",
      "sinh(x)",
      "cosh(x)",
      "tanh(x)",
      "asin(x)",
      "acos(x)",
      "atan(x)",
      "x^3",
      "x^2",
      "-x",
      "x/y",
      "x^y",
      "x - y",
    ];
    const wasm = compileExpressions(texts, ["x", "y"], { backend: "wasm" });
    const tape = compileExpressions(texts, ["x", "y"], { backend: "tape" });
    expect(wasm.backend).toBe("wasm");
    expect(tape.backend).toBe("tape");
    const a = new Float64Array(texts.length);
    const b = new Float64Array(texts.length);
    for (const point of [
      [0.5, 2],
      [-0.3, 0],
      [0, 0],
      [-2, 0.5],
      [1e-300, -1e-300],
      [Infinity, 2],
      [NaN, 1],
    ]) {
      wasm.evaluate(point, a);
      tape.evaluate(point, b);
      // Same operations on IEEE doubles in the same order: identical results, NaN where the tape has NaN.
      expect([...a]).toEqual([...b]);
    }
  });

  it("falls back to the tape where WebAssembly is unavailable", () => {
    vi.stubGlobal("WebAssembly", undefined);
    const compiled = compileExpressions(["m*x^2"], ["x"], { constants: { m: 3 } });
    expect(compiled.backend).toBe("tape");
    const out = new Float64Array(1);
    compiled.evaluate([2], out);
    expect(out[0]).toBe(12);
    expect(() => compileExpressions(["x"], ["x"], { backend: "wasm" })).toThrow(/WebAssembly/);
  });

  it("falls back to the tape when the engine refuses the module", () => {
    class Refusing {
      constructor() {
        throw new RangeError("synchronous compilation of this size is not allowed here");
      }
    }
    vi.stubGlobal("WebAssembly", { ...WebAssembly, Module: Refusing });
    expect(compileExpressions(["sin(x)"], ["x"]).backend).toBe("tape");
  });

  // The compiled module against the tree evaluator at random states, for every expression the simulator compiles:
  // mass matrix, forcing, energy, constraint terms and outputs of every template and demo model.
  for (const { name, form } of templateAndDemoForms()) {
    it(`agrees with the tape to 1e-12 relative at random states: ${name}`, () => {
      const shape = { coordinateNames: form.coordinates, inputNames: form.inputs ?? [], parameters: form.parameters };
      const multipliers = (form.constraints ?? []).map(multiplierSymbol);
      const variables = outputVariables(shape, multipliers);
      const layout = layoutOf(shape);
      const expressions = [
        ...form.massMatrix.flat(),
        ...form.forcing,
        ...(form.energy ? [form.energy] : []),
        ...(form.constraints ?? []).map((c) => c.expr),
        ...(form.outputs ?? []).map((o) => o.expr),
      ];
      const wasm = compileExpressions(expressions, variables, { backend: "wasm" });
      const tape = compileExpressions(expressions, variables, { backend: "tape" });
      const random = seededRandom(name.length * 7919);
      const a = new Float64Array(expressions.length);
      const b = new Float64Array(expressions.length);
      for (let trial = 0; trial < 50; trial++) {
        // Angles and lengths of order one, parameters positive (masses, lengths, stiffnesses).
        const values = variables.map((_, i) => (i >= layout.parameters && i < layout.length ? 0.2 + 3 * random() : 4 * random() - 2));
        wasm.evaluate(values, a);
        tape.evaluate(values, b);
        for (let k = 0; k < expressions.length; k++) {
          const scale = Math.max(Math.abs(b[k]!), 1e-300);
          if (Number.isNaN(b[k])) expect(a[k]).toBeNaN();
          else expect(Math.abs(a[k]! - b[k]!) / scale).toBeLessThanOrEqual(1e-12);
        }
      }
    });
  }
});
