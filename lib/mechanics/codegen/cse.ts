import type { FunctionName } from "../expr/ast";
import type { Expr } from "../expr/ast";
import { symbolBinder } from "../compile";
import { ExpressionGraph, type GraphNode } from "../graph";

/**
 * Common-subexpression elimination for code export: the expressions of one
 * generated function go into a hash-consed graph (graph.ts); every node used
 * more than once becomes a temporary, assigned before the outputs in
 * dependency order. Printing is left to a per-language `Syntax`.
 */

export interface HoistedExpressions {
  graph: ExpressionGraph;
  /** Root node of each output. */
  outputs: number[];
  /** Nodes assigned to temporaries, operands first. */
  temporaries: number[];
}

/**
 * Builds the graph for `expressions` over `variables` (slot i is variables[i])
 * and picks the temporaries.
 *
 * @example hoistCommonSubexpressions([parseExpression("a*cos(q)"), parseExpression("b*cos(q)")], ["q", "a", "b"]).temporaries.length // 1
 */
export function hoistCommonSubexpressions(expressions: readonly Expr[], variables: readonly string[]): HoistedExpressions {
  const graph = new ExpressionGraph();
  const bind = symbolBinder(variables);
  const outputs = expressions.map((e) => graph.fromExpr(e, bind));
  const order = graph.reachable(outputs);
  const uses = graph.useCounts(order);
  for (const id of outputs) uses[id]!++;
  // A square or cube prints its operand two or three times: give it a name unless it is a leaf.
  for (const id of order) {
    const node = graph.nodes[id]!;
    if (node.op === "square" || node.op === "cube") uses[node.a]! += 2;
  }
  const temporaries = order.filter((id) => {
    const op = graph.nodes[id]!.op;
    return op !== "var" && op !== "const" && uses[id]! > 1;
  });
  return { graph, outputs, temporaries };
}

/** How one language writes numbers, variables, operators and functions. */
export interface Syntax {
  /** A number literal that the language reads as a double (never integer division). */
  number(value: number): string;
  /** The reference to variable slot i. */
  variable(slot: number): string;
  /** A function call of the whitelist. */
  call(fn: FunctionName, argument: string): string;
  /** a^b with both operands already printed (each an atom or parenthesized). */
  power(base: string, exponent: string): string;
  /** Temporary names. */
  temporary(index: number): string;
}

// Precedences: sums 1, products 2, unary minus 3, power 4, atoms 5.
const ATOM = 5;

export interface PrintedFunction {
  temporaries: { name: string; code: string }[];
  outputs: string[];
}

/** Prints the hoisted expressions in a language's syntax. */
export function printHoisted(hoisted: HoistedExpressions, syntax: Syntax): PrintedFunction {
  const { graph } = hoisted;
  const names = new Map<number, string>();
  const print = (id: number, top: boolean): { code: string; precedence: number } => {
    const named = names.get(id);
    if (named !== undefined && !top) return { code: named, precedence: ATOM };
    const node: GraphNode = graph.nodes[id]!;
    const atom = (child: number) => wrap(print(child, false), ATOM);
    const at = (child: number, precedence: number) => wrap(print(child, false), precedence);
    switch (node.op) {
      case "const":
        return node.value < 0 ? { code: `(${syntax.number(node.value)})`, precedence: ATOM } : { code: syntax.number(node.value), precedence: ATOM };
      case "var":
        return { code: syntax.variable(node.a), precedence: ATOM };
      case "add":
        return { code: `${at(node.a, 1)} + ${at(node.b, 2)}`, precedence: 1 };
      case "sub":
        return { code: `${at(node.a, 1)} - ${at(node.b, 2)}`, precedence: 1 };
      case "mul":
        return { code: `${at(node.a, 2)}*${at(node.b, 3)}`, precedence: 2 };
      case "div":
        return { code: `${at(node.a, 2)}/${at(node.b, 3)}`, precedence: 2 };
      case "neg":
        // A negated operand is always parenthesized where it is used (see wrap), so "a - -b" never appears.
        return { code: `-${at(node.a, 3)}`, precedence: 3 };
      case "square": {
        const base = atom(node.a);
        return { code: `${base}*${base}`, precedence: 2 };
      }
      case "cube": {
        const base = atom(node.a);
        return { code: `${base}*${base}*${base}`, precedence: 2 };
      }
      case "pow":
        return { code: syntax.power(atom(node.a), atom(node.b)), precedence: ATOM };
      default:
        return { code: syntax.call(node.op, print(node.a, false).code), precedence: ATOM };
    }
  };
  const temporaries = hoisted.temporaries.map((id, index) => {
    const code = print(id, true).code;
    const name = syntax.temporary(index);
    names.set(id, name);
    return { name, code };
  });
  const outputs = hoisted.outputs.map((id) => print(id, false).code);
  return { temporaries, outputs };
}

function wrap(printed: { code: string; precedence: number }, required: number): string {
  // Unary minus binds looser than any binary operand position needs.
  const needs = printed.precedence < required || (printed.precedence === 3 && required >= 2);
  return needs ? `(${printed.code})` : printed.code;
}
