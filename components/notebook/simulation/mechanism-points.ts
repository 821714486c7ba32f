/**
 * The points the mechanism animation draws, suggested from the model's own
 * positions: pairs of definitions named for x and y (xL/yL, x1/y1, p_x/p_y),
 * and coordinates that are lengths, which move a support along a straight
 * track (a trolley's x, a seat's z). Supports come first, then what hangs
 * from them, so the links join in the order the mechanism is built.
 */
import { walk, parseExpression } from "@/lib/mechanics/browser";
import type { DerivationDocument } from "@/lib/notebook/document";
import type { PointPair } from "@/lib/notebook/document";

/** A point coordinate that stays at zero (a support's fixed height, say). */
export const FIXED_ZERO = "0";

export interface PointSources {
  coordinates: { name: string; unit: string }[];
  definitions: { name: string; expr: string }[];
}

export function pointSourcesOf(doc: DerivationDocument): PointSources {
  const sources: PointSources = { coordinates: [], definitions: [] };
  for (const cell of doc.cells) {
    if (cell.kind === "coordinates")
      for (const row of cell.rows) if (row.name.trim()) sources.coordinates.push({ name: row.name.trim(), unit: row.unit.trim() });
    if (cell.kind === "definitions") for (const row of cell.rows) if (row.name.trim()) sources.definitions.push({ name: row.name.trim(), expr: row.expr });
  }
  return sources;
}

const LENGTH_UNITS = new Set(["m", "mm", "cm", "km"]);

/** A coordinate in a length unit can be drawn as a support moving along a track. */
export function isLengthUnit(unit: string): boolean {
  return LENGTH_UNITS.has(unit.trim());
}

/** The y partner's possible names for an x-like name: xL → yL, x1 → y1, bx → by, p_x → p_y. */
function partnerNames(name: string): string[] {
  const names: string[] = [];
  if (/^x/.test(name)) names.push(`y${name.slice(1)}`);
  if (/^X/.test(name)) names.push(`Y${name.slice(1)}`);
  if (/x$/.test(name) && name.length > 1) names.push(`${name.slice(0, -1)}y`);
  if (/X$/.test(name) && name.length > 1) names.push(`${name.slice(0, -1)}Y`);
  if (/_x(_|$)/.test(name)) names.push(name.replace(/_x(_|$)/, "_y$1"));
  return names;
}

/** A length coordinate moves vertically when named for height (y, z, h), else horizontally. */
function isVertical(name: string): boolean {
  return /^(y|z|h)/i.test(name) || /_(y|z)$/i.test(name);
}

/** The coordinates a name depends on, through the definitions. */
function coordinateDependencies(sources: PointSources): (name: string) => Set<string> {
  const coordinateNames = new Set(sources.coordinates.map((c) => c.name));
  const definitions = new Map(sources.definitions.map((d) => [d.name, d.expr]));
  const memo = new Map<string, Set<string>>();
  const of = (name: string, seen: Set<string>): Set<string> => {
    if (coordinateNames.has(name)) return new Set([name]);
    const cached = memo.get(name);
    if (cached) return cached;
    const expr = definitions.get(name);
    const result = new Set<string>();
    if (expr === undefined || seen.has(name)) return result;
    seen.add(name);
    try {
      walk(parseExpression(expr), (node) => {
        if (node.kind === "sym") for (const q of of(node.name, seen)) result.add(q);
      });
    } catch {
      // A definition that does not parse yet depends on nothing we can tell.
    }
    memo.set(name, result);
    return result;
  };
  return (name) => (name === FIXED_ZERO ? new Set() : of(name, new Set()));
}

/**
 * The model's positions as drawn points, supports first.
 *
 * @example suggestPoints({ coordinates: [{ name: "x", unit: "m" }, { name: "theta", unit: "rad" }], definitions: [{ name: "xL", expr: "x + l*sin(theta)" }, { name: "yL", expr: "-l*cos(theta)" }] })
 * // [{ x: "x", y: "0" }, { x: "xL", y: "yL" }]
 */
export function suggestPoints(sources: PointSources): PointPair[] {
  const definitionNames = new Set(sources.definitions.map((d) => d.name));
  const points: PointPair[] = [];
  const paired = new Set<string>();
  for (const { name } of sources.definitions) {
    if (paired.has(name)) continue;
    const partner = partnerNames(name).find((candidate) => definitionNames.has(candidate) && !paired.has(candidate));
    if (!partner) continue;
    points.push({ x: name, y: partner });
    paired.add(name).add(partner);
  }
  for (const { name, unit } of sources.coordinates) {
    if (!isLengthUnit(unit)) continue;
    points.push(isVertical(name) ? { x: FIXED_ZERO, y: name } : { x: name, y: FIXED_ZERO });
  }
  const dependencies = coordinateDependencies(sources);
  const depth = (p: PointPair) => new Set([...dependencies(p.x), ...dependencies(p.y)]).size;
  return points
    .map((p, order) => ({ p, order, depth: depth(p) }))
    .sort((a, b) => a.depth - b.depth || a.order - b.order)
    .map(({ p }) => p);
}

/** The first suggestion not drawn yet, or an empty point to fill in. */
export function nextPoint(sources: PointSources, existing: readonly PointPair[]): PointPair {
  const taken = new Set(existing.map((p) => `${p.x}|${p.y}`));
  return suggestPoints(sources).find((p) => !taken.has(`${p.x}|${p.y}`)) ?? { x: "", y: "" };
}
