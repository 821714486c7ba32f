import { ExpressionError } from "../errors";
import type { Expr, SymbolNode } from "../expr/ast";
import * as C from "./coefficient";
import type { Algebra } from "./algebra";
import type { Poly } from "./term";

/** Resolves an identifier (with its prime order) to a canonical sum, or throws ExpressionError. */
export type SymbolResolver = (node: SymbolNode) => Poly;

/**
 * Brings a parsed expression into canonical form. Symbols are resolved by the
 * caller (coordinates, parameters, definitions and their rates).
 * Arithmetic failures (division by zero, a non-constant exponent) are
 * reported as ExpressionError at the offending node.
 *
 * @example toCanonical(alg, parseExpression("sin(a)^2 + cos(a)^2"), resolve) // → 1
 */
export function toCanonical(alg: Algebra, expr: Expr, resolve: SymbolResolver): Poly {
  const visit = (node: Expr): Poly => {
    switch (node.kind) {
      case "num":
        return alg.constant(C.fromNumber(node.value));
      case "pi":
        return alg.symbol(alg.space.pi);
      case "sym":
        return resolve(node);
      case "neg":
        return alg.negate(visit(node.arg));
      case "call":
        try {
          return alg.call(node.fn, visit(node.arg));
        } catch (error) {
          if (error instanceof RangeError) throw new ExpressionError("unsupported", error.message, node.start, node.end - node.start);
          throw error;
        }
      case "bin": {
        const left = visit(node.left);
        const right = visit(node.right);
        switch (node.op) {
          case "+":
            return alg.add(left, right);
          case "-":
            return alg.sub(left, right);
          case "*":
            return alg.mul(left, right);
          case "/":
            if (right.size === 0) throw new ExpressionError("unsupported", "division by zero", node.right.start, node.right.end - node.right.start);
            return alg.divide(left, right);
          case "^": {
            const exponent = constantValue(right);
            if (exponent === null) {
              // base^v = exp(v·log(base)) for a non-constant exponent; a base that is zero has no logarithm.
              try {
                return alg.call("exp", alg.mul(right, alg.call("log", left)));
              } catch (error) {
                if (error instanceof RangeError) {
                  throw new ExpressionError("unsupported", `a zero base with a variable exponent: ${error.message}`, node.start, node.end - node.start);
                }
                throw error;
              }
            }
            try {
              return alg.power(left, exponent);
            } catch (error) {
              if (error instanceof RangeError) throw new ExpressionError("unsupported", error.message, node.start, node.end - node.start);
              throw error;
            }
          }
        }
      }
    }
  };
  return visit(expr);
}

/** The value of a sum that is a plain number, else null. */
export function constantValue(p: Poly): number | null {
  if (p.size === 0) return 0;
  if (p.size > 1) return null;
  const t = p.values().next().value!;
  return t.f.length === 0 && t.g === null ? C.toNumber(t.c) : null;
}
