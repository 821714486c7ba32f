import { describe, expect, it } from "vitest";
import { compileExpressions, compileMassMatrixSystem } from "@/lib/mechanics/compile";
import { ExpressionError } from "@/lib/mechanics/errors";
import { formatExpression, parseExpression } from "@/lib/mechanics/expr/parse";
import { evaluateTree, randomExpression, seededRandom } from "./helpers/random-expr";

describe("compileExpressions", () => {
  it("agrees with a tree-walking evaluator on random expressions (seeded)", () => {
    const random = seededRandom(20240611);
    const variables = ["q1", "q2", "q1'", "q2'", "t"];
    for (let trial = 0; trial < 200; trial++) {
      const trees = [0, 1, 2].map(() => randomExpression(random, [...variables, "k"]));
      const compiled = compileExpressions(trees.map(formatExpression), variables, { constants: { k: 1.7 } });
      const values = variables.map(() => random() * 4 - 2);
      const out = new Float64Array(3);
      compiled.evaluate(values, out);
      const named: Record<string, number> = { k: 1.7 };
      variables.forEach((v, i) => (named[v] = values[i]!));
      trees.forEach((tree, i) => {
        const expected = evaluateTree(tree, named);
        expect(out[i]).toBeCloseTo(expected, 10);
      });
    }
  });

  it("shares common subexpressions across outputs", () => {
    const c = compileExpressions(["m*cos(a - b)", "cos(a - b)*l", "sin(a - b)^2 + cos(a - b)"], ["a", "b", "m", "l"]);
    // a−b, cos, sin, square, +, and two products: 7 instructions, not 11.
    expect(c.instructionCount).toBe(7);
    const out = new Float64Array(3);
    c.evaluate([0.9, 0.2, 2, 3], out);
    expect(out[0]).toBeCloseTo(2 * Math.cos(0.7), 14);
    expect(out[1]).toBeCloseTo(3 * Math.cos(0.7), 14);
    expect(out[2]).toBeCloseTo(Math.sin(0.7) ** 2 + Math.cos(0.7), 14);
  });

  it("distinguishes a coordinate, its rate and its acceleration, and knows pi and t", () => {
    const c = compileExpressions(["q + 10*q' + 100*q'' + pi*t"], ["q", "q'", "q''", "t"]);
    const out = new Float64Array(1);
    c.evaluate([1, 2, 3, 0.5], out);
    expect(out[0]).toBeCloseTo(1 + 20 + 300 + Math.PI / 2, 12);
  });

  it("reports an unknown symbol with its column", () => {
    try {
      compileExpressions(["m*g*l3"], ["m", "g"]);
      expect.unreachable();
    } catch (error) {
      expect(error).toBeInstanceOf(ExpressionError);
      expect((error as ExpressionError).code).toBe("unknown_symbol");
      expect((error as ExpressionError).column).toBe(5);
    }
  });

  it("propagates non-finite results as IEEE arithmetic does", () => {
    const c = compileExpressions(["1/x", "log(x)", "sqrt(x)"], ["x"]);
    const out = new Float64Array(3);
    c.evaluate([0], out);
    expect(out[0]).toBe(Infinity);
    expect(out[1]).toBe(-Infinity);
    c.evaluate([-1], out);
    expect(Number.isNaN(out[2])).toBe(true);
  });
});

describe("compileMassMatrixSystem", () => {
  // Double pendulum with point masses and massless rods — J. R. Taylor, Classical Mechanics (2005), ch. 11 (from memory).
  const pendulum = {
    coordinates: ["theta1", "theta2"],
    massMatrix: [
      ["(m1 + m2)*l1^2", "m2*l1*l2*cos(theta1 - theta2)"],
      ["m2*l1*l2*cos(theta1 - theta2)", "m2*l2^2"],
    ],
    forcing: ["-m2*l1*l2*theta2'^2*sin(theta1 - theta2) - (m1 + m2)*g*l1*sin(theta1)", "m2*l1*l2*theta1'^2*sin(theta1 - theta2) - m2*g*l2*sin(theta2)"],
    parameters: { m1: 1.3, m2: 0.7, l1: 1.1, l2: 0.8, g: 9.81 },
  };

  it("solves M q'' = f: the accelerations satisfy the equations they came from", () => {
    const sys = compileMassMatrixSystem(pendulum);
    const random = seededRandom(7);
    for (let trial = 0; trial < 50; trial++) {
      const x = [0, 0, 0, 0].map(() => random() * 6 - 3);
      const dx = new Float64Array(4);
      expect(sys.stateDerivative(0, x, [], dx)).toBe(true);
      const mass = new Float64Array(4);
      const f = new Float64Array(2);
      sys.massMatrixAndForcing(0, x.slice(0, 2), x.slice(2), [], mass, f);
      expect(dx[0]).toBe(x[2]);
      expect(dx[1]).toBe(x[3]);
      for (let i = 0; i < 2; i++) {
        expect(mass[2 * i]! * dx[2]! + mass[2 * i + 1]! * dx[3]!).toBeCloseTo(f[i]!, 10);
      }
    }
  });

  it("reports a singular mass matrix instead of returning garbage", () => {
    const sys = compileMassMatrixSystem({
      coordinates: ["x", "y"],
      massMatrix: [
        ["m", "m"],
        ["m", "m"],
      ],
      forcing: ["0", "0"],
      parameters: { m: 1 },
    });
    expect(sys.accelerations(0, [0, 0], [0, 0], [], new Float64Array(2))).toBe(false);
  });

  it("passes inputs through", () => {
    const sys = compileMassMatrixSystem({ coordinates: ["x"], inputs: ["F"], massMatrix: [["m"]], forcing: ["F - k*x"], parameters: { m: 2, k: 3 } });
    const dx = new Float64Array(2);
    sys.stateDerivative(0, [1, 5], [7], dx);
    expect(dx[0]).toBe(5);
    expect(dx[1]).toBeCloseTo((7 - 3) / 2, 15);
  });

  it("never evaluates text as code", () => {
    // Only whitelisted operations exist on the tape: a JavaScript-looking input is a parse error.
    expect(() => compileExpressions(["process.exit(1)"], [])).toThrow(ExpressionError);
    expect(() => parseExpression("constructor(1)")).toThrow(ExpressionError);
  });
});
