import { ExpressionError } from "./errors";
import type { Expr, FunctionName } from "./expr/ast";

/**
 * A hash-consed expression graph: every distinct subexpression is stored once
 * and named by a small integer, so that a subexpression shared by several
 * outputs (cos(θ1 − θ2) in every entry of a mass matrix) is computed once.
 * compile.ts turns it into an instruction tape; codegen/ turns it into
 * temporaries. Nodes are numbered in creation order, which is a topological
 * order (operands before the nodes that use them).
 */

export const UNARY_FUNCTIONS: readonly FunctionName[] = ["sin", "cos", "tan", "exp", "log", "sqrt", "abs", "sinh", "cosh", "tanh", "asin", "acos", "atan"];

export type GraphOp = "const" | "var" | "add" | "sub" | "mul" | "div" | "neg" | "pow" | "square" | "cube" | FunctionName;

export interface GraphNode {
  op: GraphOp;
  /** First operand (node id), or the variable index for "var"; -1 if none. */
  a: number;
  /** Second operand (node id); -1 if none. */
  b: number;
  /** The value of a "const" node. */
  value: number;
}

/** The numeric value of each whitelisted function (shared with the canonical form's evaluator). */
export const FUNCTION_VALUES: Record<FunctionName, (x: number) => number> = {
  sin: Math.sin,
  cos: Math.cos,
  tan: Math.tan,
  exp: Math.exp,
  log: Math.log,
  sqrt: Math.sqrt,
  abs: Math.abs,
  sinh: Math.sinh,
  cosh: Math.cosh,
  tanh: Math.tanh,
  asin: Math.asin,
  acos: Math.acos,
  atan: Math.atan,
};

/** How an identifier of the tree enters the graph: as a variable slot or a fixed number. */
export type SymbolBinding = { variable: number } | { value: number };

export class ExpressionGraph {
  readonly nodes: GraphNode[] = [];
  private readonly index = new Map<string, number>();

  constant(value: number): number {
    // Normalise −0 so that 0 and −0 share a node.
    const v = value === 0 ? 0 : value;
    return this.intern("const", -1, -1, v, `c${Object.is(v, NaN) ? "NaN" : v}`);
  }

  variable(slot: number): number {
    return this.intern("var", slot, -1, 0, `v${slot}`);
  }

  isConst(id: number, value?: number): boolean {
    const node = this.nodes[id]!;
    return node.op === "const" && (value === undefined || node.value === value);
  }

  constValue(id: number): number | null {
    const node = this.nodes[id]!;
    return node.op === "const" ? node.value : null;
  }

  add(a: number, b: number): number {
    const ca = this.constValue(a);
    const cb = this.constValue(b);
    if (ca !== null && cb !== null) return this.constant(ca + cb);
    if (ca === 0) return b;
    if (cb === 0) return a;
    if (this.nodes[b]!.op === "neg") return this.sub(a, this.nodes[b]!.a);
    if (this.nodes[a]!.op === "neg") return this.sub(b, this.nodes[a]!.a);
    // IEEE addition is commutative, so ordering operands loses nothing and finds more sharing.
    return a <= b ? this.intern("add", a, b) : this.intern("add", b, a);
  }

  sub(a: number, b: number): number {
    const ca = this.constValue(a);
    const cb = this.constValue(b);
    if (ca !== null && cb !== null) return this.constant(ca - cb);
    if (cb === 0) return a;
    if (ca === 0) return this.neg(b);
    if (a === b) return this.constant(0);
    if (this.nodes[b]!.op === "neg") return this.add(a, this.nodes[b]!.a);
    return this.intern("sub", a, b);
  }

  mul(a: number, b: number): number {
    const ca = this.constValue(a);
    const cb = this.constValue(b);
    if (ca !== null && cb !== null) return this.constant(ca * cb);
    if (ca === 0 || cb === 0) return this.constant(0);
    if (ca === 1) return b;
    if (cb === 1) return a;
    if (ca === -1) return this.neg(b);
    if (cb === -1) return this.neg(a);
    if (this.nodes[a]!.op === "neg") return this.neg(this.mul(this.nodes[a]!.a, b));
    if (this.nodes[b]!.op === "neg") return this.neg(this.mul(a, this.nodes[b]!.a));
    if (a === b) return this.intern("square", a, -1);
    return a <= b ? this.intern("mul", a, b) : this.intern("mul", b, a);
  }

  div(a: number, b: number): number {
    const ca = this.constValue(a);
    const cb = this.constValue(b);
    if (ca !== null && cb !== null) return this.constant(ca / cb);
    if (ca === 0) return this.constant(0);
    if (cb === 1) return a;
    if (cb === -1) return this.neg(a);
    if (this.nodes[a]!.op === "neg") return this.neg(this.div(this.nodes[a]!.a, b));
    return this.intern("div", a, b);
  }

  neg(a: number): number {
    const node = this.nodes[a]!;
    if (node.op === "const") return this.constant(-node.value);
    if (node.op === "neg") return node.a;
    return this.intern("neg", a, -1);
  }

  pow(a: number, b: number): number {
    const ca = this.constValue(a);
    const cb = this.constValue(b);
    if (ca !== null && cb !== null) return this.constant(Math.pow(ca, cb));
    if (cb === 0) return this.constant(1);
    if (cb === 1) return a;
    if (cb === 2) return this.intern("square", a, -1);
    if (cb === 3) return this.intern("cube", a, -1);
    if (cb === -1) return this.div(this.constant(1), a);
    if (cb === -2) return this.div(this.constant(1), this.intern("square", a, -1));
    if (cb === 0.5) return this.call("sqrt", a);
    return this.intern("pow", a, b);
  }

  call(fn: FunctionName, a: number): number {
    const ca = this.constValue(a);
    if (ca !== null) return this.constant(FUNCTION_VALUES[fn](ca));
    return this.intern(fn, a, -1);
  }

  /**
   * Adds a parsed tree. `bind` says what each identifier stands for; an
   * identifier it does not know is an `unknown_symbol` error at its column.
   */
  fromExpr(expr: Expr, bind: (name: string, order: 0 | 1 | 2) => SymbolBinding | undefined): number {
    const visit = (e: Expr): number => {
      switch (e.kind) {
        case "num":
          return this.constant(e.value);
        case "pi":
          return this.constant(Math.PI);
        case "sym": {
          const binding = bind(e.name, e.order);
          if (binding === undefined) {
            throw new ExpressionError("unknown_symbol", `unknown symbol "${e.name}${"'".repeat(e.order)}"`, e.start, e.end - e.start);
          }
          return "variable" in binding ? this.variable(binding.variable) : this.constant(binding.value);
        }
        case "neg":
          return this.neg(visit(e.arg));
        case "call":
          return this.call(e.fn, visit(e.arg));
        case "bin": {
          const l = visit(e.left);
          const r = visit(e.right);
          switch (e.op) {
            case "+":
              return this.add(l, r);
            case "-":
              return this.sub(l, r);
            case "*":
              return this.mul(l, r);
            case "/":
              return this.div(l, r);
            case "^":
              return this.pow(l, r);
          }
        }
      }
    };
    return visit(expr);
  }

  /** Ids of the nodes the given roots depend on (roots included), in topological order. */
  reachable(roots: readonly number[]): number[] {
    const seen = new Uint8Array(this.nodes.length);
    const stack = [...roots];
    while (stack.length > 0) {
      const id = stack.pop()!;
      if (seen[id]) continue;
      seen[id] = 1;
      const node = this.nodes[id]!;
      if (node.op !== "var" && node.op !== "const") {
        if (node.a >= 0) stack.push(node.a);
        if (node.b >= 0) stack.push(node.b);
      }
    }
    const order: number[] = [];
    for (let id = 0; id < seen.length; id++) if (seen[id]) order.push(id);
    return order;
  }

  /** How many times each node is used as an operand by the nodes in `ids`. */
  useCounts(ids: readonly number[]): Uint32Array {
    const counts = new Uint32Array(this.nodes.length);
    for (const id of ids) {
      const node = this.nodes[id]!;
      if (node.op === "var" || node.op === "const") continue;
      if (node.a >= 0) counts[node.a]!++;
      if (node.b >= 0) counts[node.b]!++;
    }
    return counts;
  }

  private intern(op: GraphOp, a: number, b: number, value = 0, key = `${op}:${a}:${b}`): number {
    const found = this.index.get(key);
    if (found !== undefined) return found;
    const id = this.nodes.length;
    this.nodes.push({ op, a, b, value });
    this.index.set(key, id);
    return id;
  }
}
