import { ExpressionError } from "../errors";
import { symbolsOf, TIME, type Expr } from "../expr/ast";
import { DEFAULT_PARSE_LIMITS, expressionTree, type ExpressionSource } from "../expr/parse";
import { Algebra } from "./algebra";
import { formatPoly, formatTerms } from "./format";
import { toCanonical } from "./from-expr";
import { SymbolSpace } from "./space";
import type { Poly } from "./term";

export interface CanonicalOptions {
  /**
   * Names to treat as coordinates (with rates q' and accelerations q'').
   * Any other name with a prime is a coordinate too; the rest are constants.
   */
  coordinates?: readonly string[];
  /** Constants (parameters, inputs) in the order their factors are printed; others follow by name. */
  constants?: readonly string[];
}

export interface CanonicalExpressions {
  space: SymbolSpace;
  algebra: Algebra;
  polys: Poly[];
  format(p: Poly): string;
  terms(p: Poly): string[];
}

/**
 * Canonical forms of several standalone expressions (text, or trees) over one shared symbol table.
 *
 * @example canonicalize(["sin(a)^2 + cos(a)^2"]).polys[0] // the constant 1
 */
export function canonicalize(sources: readonly ExpressionSource[], options: CanonicalOptions = {}): CanonicalExpressions {
  const trees: Expr[] = sources.map((source) => expressionTree(source, DEFAULT_PARSE_LIMITS));
  const coordinates = new Set(options.coordinates ?? []);
  const constants = new Set<string>();
  for (const tree of trees) {
    for (const [name, order] of symbolsOf(tree)) {
      if (name === TIME) continue;
      if (order > 0) coordinates.add(name);
      else constants.add(name);
    }
  }
  const space = new SymbolSpace();
  const ids = new Map<string, number>();
  const declared = (options.constants ?? []).filter((n) => constants.has(n) && !coordinates.has(n));
  const rest = [...constants].filter((n) => !coordinates.has(n) && !declared.includes(n)).sort();
  for (const name of [...declared, ...rest]) ids.set(name, space.addParameter(name));
  const coordinateIndex = new Map<string, number>();
  for (const name of [...(options.coordinates ?? []), ...[...coordinates].filter((n) => !(options.coordinates ?? []).includes(n)).sort()]) {
    if (coordinateIndex.has(name)) continue;
    space.addCoordinate(name);
    coordinateIndex.set(name, coordinateIndex.size);
  }
  const algebra = new Algebra(space);
  const polys = trees.map((tree) =>
    toCanonical(algebra, tree, (node) => {
      if (node.name === TIME) {
        if (node.order > 0) throw new ExpressionError("rate_of_parameter", "t has no rate", node.start, node.end - node.start);
        return algebra.symbol(space.time);
      }
      const index = coordinateIndex.get(node.name);
      if (index !== undefined) return algebra.symbol([space.coordinates, space.rates, space.accelerations][node.order]![index]!);
      return algebra.symbol(ids.get(node.name)!);
    }),
  );
  return { space, algebra, polys, format: (p) => formatPoly(space, p), terms: (p) => formatTerms(space, p) };
}

/** The canonical text of one expression. @example canonicalText("cos(b - a)") // "cos(a - b)" */
export function canonicalText(source: ExpressionSource, options: CanonicalOptions = {}): string {
  const c = canonicalize([source], options);
  return c.format(c.polys[0]!);
}

/** True when two expressions have the same canonical form (their difference is zero). */
export function sameExpression(a: ExpressionSource, b: ExpressionSource, options: CanonicalOptions = {}): boolean {
  const c = canonicalize([a, b], options);
  return c.algebra.sub(c.polys[0]!, c.polys[1]!).size === 0;
}
