import type { Expr } from "@/lib/mechanics/expr/ast";

/** The engine's seeded generator (mulberry32), so randomised tests are repeatable. */
export { seededRandom } from "@/lib/mechanics/canonical/evaluate";

/** Evaluates a tree by walking it — the reference the compiled tape is checked against. */
export { evaluateTree } from "./numeric";

const span = { start: 0, end: 0 };

/**
 * A random smooth expression over the given symbols: sums, products, quotients
 * by (2 + square), small integer powers, sin/cos/exp/atan — well defined everywhere.
 */
export function randomExpression(random: () => number, symbols: string[], depth = 4): Expr {
  const leaf = (): Expr => {
    if (random() < 0.3) return { kind: "num", value: Math.round(random() * 40) / 10 + 0.5, ...span };
    const s = symbols[Math.floor(random() * symbols.length)]!;
    const order = s.endsWith("''") ? 2 : s.endsWith("'") ? 1 : 0;
    return { kind: "sym", name: s.replace(/'+$/, ""), order, ...span };
  };
  if (depth <= 0 || random() < 0.2) return leaf();
  const sub = () => randomExpression(random, symbols, depth - 1);
  const r = random();
  if (r < 0.25) return { kind: "bin", op: random() < 0.5 ? "+" : "-", left: sub(), right: sub(), ...span };
  if (r < 0.5) return { kind: "bin", op: "*", left: sub(), right: sub(), ...span };
  if (r < 0.6) {
    const den: Expr = {
      kind: "bin",
      op: "+",
      left: { kind: "num", value: 2, ...span },
      right: { kind: "bin", op: "^", left: sub(), right: { kind: "num", value: 2, ...span }, ...span },
      ...span,
    };
    return { kind: "bin", op: "/", left: sub(), right: den, ...span };
  }
  if (r < 0.7) return { kind: "bin", op: "^", left: sub(), right: { kind: "num", value: 1 + Math.floor(random() * 3), ...span }, ...span };
  if (r < 0.75) return { kind: "neg", arg: sub(), ...span };
  const fns = ["sin", "cos", "atan", "sin", "cos", "tanh"] as const;
  return { kind: "call", fn: fns[Math.floor(random() * fns.length)]!, arg: sub(), ...span };
}
