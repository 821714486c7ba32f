import { describe, expect, it } from "vitest";
import { compileExpressions } from "@/lib/mechanics/compile";
import { constantValue, dependsOn, differentiate } from "@/lib/mechanics/differentiate";
import { formatExpression, parseExpression } from "@/lib/mechanics/expr/parse";
import { evaluateTree, randomExpression, seededRandom } from "./helpers/random-expr";

describe("differentiate", () => {
  it("matches central finite differences on random expressions (seeded)", () => {
    const random = seededRandom(424242);
    const symbols = ["q", "q'", "a", "t"];
    let checked = 0;
    for (let trial = 0; trial < 300; trial++) {
      const tree = randomExpression(random, symbols, 4);
      const at: Record<string, number> = { q: random() * 2 - 1, "q'": random() * 2 - 1, a: random() + 0.5, t: random() };
      for (const [name, order] of [
        ["q", 0],
        ["q", 1],
        ["t", 0],
      ] as const) {
        const key = name + "'".repeat(order);
        const derivative = differentiate(tree, name, order);
        const exact = evaluateTree(derivative, at);
        const h = 1e-5;
        const plus = evaluateTree(tree, { ...at, [key]: at[key]! + h });
        const minus = evaluateTree(tree, { ...at, [key]: at[key]! - h });
        const numeric = (plus - minus) / (2 * h);
        if (!Number.isFinite(numeric) || Math.abs(numeric) > 1e6) continue;
        expect(Math.abs(exact - numeric)).toBeLessThan(1e-5 * Math.max(1, Math.abs(numeric)));
        checked++;
      }
    }
    expect(checked).toBeGreaterThan(700);
  });

  it("covers every function of the language", () => {
    const cases: [string, number][] = [
      ["tan(x)", 0.4],
      ["exp(x)", 0.4],
      ["log(x)", 0.4],
      ["sqrt(x)", 0.4],
      ["abs(x)", -0.4],
      ["sinh(x)", 0.4],
      ["cosh(x)", 0.4],
      ["tanh(x)", 0.4],
      ["asin(x)", 0.4],
      ["acos(x)", 0.4],
      ["atan(x)", 0.4],
      ["x^x", 0.4],
      ["2^x", 0.4],
      ["x^(-3)", 0.4],
      ["x^0.5", 0.4],
    ];
    for (const [text, x] of cases) {
      const d = compileExpressions([differentiate(parseExpression(text), "x")], ["x"]);
      const f = compileExpressions([text], ["x"]);
      const out = new Float64Array(1);
      d.evaluate([x], out);
      const exact = out[0]!;
      const h = 1e-6;
      f.evaluate([x + h], out);
      const plus = out[0]!;
      f.evaluate([x - h], out);
      const numeric = (plus - out[0]!) / (2 * h);
      expect(exact, text).toBeCloseTo(numeric, 6);
    }
  });

  it("treats q, q' and q'' as separate variables (partial derivatives)", () => {
    const tree = parseExpression("m*l^2*q'' + c*q' + k*sin(q)");
    expect(formatExpression(differentiate(tree, "q", 2))).toBe("m*l^2");
    expect(formatExpression(differentiate(tree, "q", 1))).toBe("c");
    expect(formatExpression(differentiate(tree, "q", 0))).toBe("k*cos(q)");
    expect(formatExpression(differentiate(tree, "m", 0))).toBe("l^2*q''");
  });

  it("knows what depends on what and what is constant", () => {
    expect(dependsOn(parseExpression("sin(q')"), "q", 1)).toBe(true);
    expect(dependsOn(parseExpression("sin(q')"), "q", 0)).toBe(false);
    expect(constantValue(parseExpression("-1/2*pi"))).toBeCloseTo(-Math.PI / 2, 15);
    expect(constantValue(parseExpression("2*x"))).toBeNull();
  });
});
