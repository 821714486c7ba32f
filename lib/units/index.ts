/**
 * Unit text, read the same way everywhere: the model's units (the engine's
 * dimensional check), the notebook's instant field checks, and the headers of
 * measured-data files. Small and dependency-free, so the notebook can check a
 * unit as it is typed without loading a math library.
 *
 * Grammar (no implicit multiplication; `^` binds tighter than `*` and `/`,
 * which associate to the left):
 *
 *     unit     := factor (("*" | "/") factor)*
 *     factor   := atom ("^" exponent)?
 *     atom     := symbol | number | "(" unit ")"
 *     exponent := "-"? number | "(" "-"? number ")"
 *
 * A symbol is a unit of the table below, for SI units also with a prefix
 * (`mm`, `ms`, `kN`, `mrad`). The model allows only the SI symbols
 * {@link MODEL_UNIT_SYMBOLS}; measured files may use any unit of the table.
 *
 * @example parseUnitText("kN*m/rad").dimension // [1, 2, -2, 0, 0, 0, 0, -1]
 */

/** Exponents of kg, m, s, A, K, cd, mol and the plane angle (rad). */
export type UnitDimension = readonly number[];

export const DIMENSION_SYMBOLS = ["kg", "m", "s", "A", "K", "cd", "mol", "rad"] as const;
export const ANGLE_INDEX = 7;

export interface ParsedUnit {
  /** Value of one of this unit in SI (e.g. 1e-3 for mm, π/180 for deg). */
  factor: number;
  dimension: UnitDimension;
  /** True for units with an offset (°C, °F): no factor converts them. */
  hasOffset: boolean;
}

export type UnitErrorCode = "syntax" | "unknown_symbol" | "not_allowed" | "value";

/** Unit text that does not read; `position` is 0-based in the text given. */
export class UnitError extends Error {
  constructor(
    readonly code: UnitErrorCode,
    message: string,
    readonly position: number,
    readonly length = 1,
  ) {
    super(message);
    this.name = "UnitError";
  }
}

/** The SI symbols a model's units are written with (the model file's rule). */
export const MODEL_UNIT_SYMBOLS = ["kg", "m", "s", "rad", "N", "J", "W", "Pa", "Hz"] as const;

const MAX_UNIT_LENGTH = 100;

type Entry = { factor: number; dimension: UnitDimension; prefixes?: boolean; offset?: boolean };
const dim = (kg: number, m: number, s: number, rad = 0): UnitDimension => [kg, m, s, 0, 0, 0, 0, rad];

// Exact values: the SI brochure's derived units and its table of non-SI units
// accepted for use with the SI (deg, min, h), the international inch and foot
// (0.0254 m, 0.3048 m) and the bar (10^5 Pa) — facts of the trade.
const UNITS: ReadonlyMap<string, Entry> = new Map<string, Entry>([
  ["g", { factor: 1e-3, dimension: dim(1, 0, 0), prefixes: true }],
  ["m", { factor: 1, dimension: dim(0, 1, 0), prefixes: true }],
  ["s", { factor: 1, dimension: dim(0, 0, 1), prefixes: true }],
  ["rad", { factor: 1, dimension: dim(0, 0, 0, 1), prefixes: true }],
  ["N", { factor: 1, dimension: dim(1, 1, -2), prefixes: true }],
  ["J", { factor: 1, dimension: dim(1, 2, -2), prefixes: true }],
  ["W", { factor: 1, dimension: dim(1, 2, -3), prefixes: true }],
  ["Pa", { factor: 1, dimension: dim(1, -1, -2), prefixes: true }],
  ["Hz", { factor: 1, dimension: dim(0, 0, -1), prefixes: true }],
  ["deg", { factor: Math.PI / 180, dimension: dim(0, 0, 0, 1) }],
  ["rev", { factor: 2 * Math.PI, dimension: dim(0, 0, 0, 1) }],
  ["min", { factor: 60, dimension: dim(0, 0, 1) }],
  ["h", { factor: 3600, dimension: dim(0, 0, 1) }],
  ["in", { factor: 0.0254, dimension: dim(0, 1, 0) }],
  ["ft", { factor: 0.3048, dimension: dim(0, 1, 0) }],
  ["bar", { factor: 1e5, dimension: dim(1, -1, -2) }],
  ["degC", { factor: 1, dimension: [0, 0, 0, 0, 1, 0, 0, 0], offset: true }],
  ["degF", { factor: 5 / 9, dimension: [0, 0, 0, 0, 1, 0, 0, 0], offset: true }],
]);

const PREFIXES: ReadonlyMap<string, number> = new Map([
  ["G", 1e9],
  ["M", 1e6],
  ["k", 1e3],
  ["c", 1e-2],
  ["m", 1e-3],
  ["u", 1e-6],
  ["µ", 1e-6],
  ["n", 1e-9],
]);

const DIMENSIONLESS: UnitDimension = [0, 0, 0, 0, 0, 0, 0, 0];

/** The table entry for a symbol, exact names first (`min` is minutes, not milli-inches). */
function lookup(symbol: string): Entry | null {
  const exact = UNITS.get(symbol);
  if (exact) return exact;
  for (const [prefix, scale] of PREFIXES) {
    if (!symbol.startsWith(prefix)) continue;
    const base = UNITS.get(symbol.slice(prefix.length));
    if (base?.prefixes) return { ...base, factor: base.factor * scale };
  }
  return null;
}

type Token = { kind: "symbol" | "number" | "op" | "(" | ")"; text: string; at: number };

function tokenize(text: string): Token[] {
  const tokens: Token[] = [];
  const pattern = /\s*(?:([A-Za-zµ°]+)|(\d+(?:\.\d+)?)|([*/^-])|(\()|(\))|(\S))/y;
  let match: RegExpExecArray | null;
  while (pattern.lastIndex < text.length && (match = pattern.exec(text))) {
    if (match[0].trim() === "") break;
    const at = match.index + match[0].length - match[0].trimStart().length;
    if (match[1]) tokens.push({ kind: "symbol", text: match[1], at });
    else if (match[2]) tokens.push({ kind: "number", text: match[2], at });
    else if (match[3]) tokens.push({ kind: "op", text: match[3], at });
    else if (match[4]) tokens.push({ kind: "(", text: "(", at });
    else if (match[5]) tokens.push({ kind: ")", text: ")", at });
    else throw new UnitError("syntax", `unexpected "${match[6]}" in a unit`, at);
  }
  return tokens;
}

export interface ParseUnitOptions {
  /** Only these symbols are allowed (as written, prefix included); default any unit of the table. */
  symbols?: readonly string[];
}

/**
 * Reads unit text; `1` (or a product of numbers) is dimensionless. Throws
 * {@link UnitError} with the 0-based position of the first problem.
 *
 * @example parseUnitText("mm").factor // 0.001
 * @example parseUnitText("deg", { symbols: MODEL_UNIT_SYMBOLS }) // throws: not allowed
 */
export function parseUnitText(text: string, options: ParseUnitOptions = {}): ParsedUnit {
  if (text.length > MAX_UNIT_LENGTH) throw new UnitError("syntax", `a unit is at most ${MAX_UNIT_LENGTH} characters`, 0);
  const tokens = tokenize(text);
  if (tokens.length === 0) throw new UnitError("syntax", "a unit is required (write 1 for none)", 0);
  const allowed = options.symbols ? new Set(options.symbols) : null;
  const symbolList = options.symbols?.join(" ");
  let index = 0;
  let hasOffset = false;
  const fail = (message: string): never => {
    throw new UnitError("syntax", message, tokens[index]?.at ?? text.trimEnd().length);
  };

  function unit(): { factor: number; dimension: number[] } {
    const result = factor();
    while (tokens[index]?.text === "*" || tokens[index]?.text === "/") {
      const divide = tokens[index]!.text === "/";
      index++;
      const next = factor();
      result.factor = divide ? result.factor / next.factor : result.factor * next.factor;
      result.dimension = result.dimension.map((d, i) => (divide ? d - next.dimension[i]! : d + next.dimension[i]!));
    }
    return result;
  }

  function factor(): { factor: number; dimension: number[] } {
    const token = tokens[index];
    if (!token) return fail("the unit ends too early");
    let base: { factor: number; dimension: number[] };
    if (token.kind === "symbol") {
      const entry = lookup(token.text);
      if (allowed && !allowed.has(token.text)) {
        throw new UnitError(entry ? "not_allowed" : "unknown_symbol", `"${token.text}" is not a unit symbol; use ${symbolList}`, token.at, token.text.length);
      }
      if (!entry) throw new UnitError("unknown_symbol", `unknown unit "${token.text}"`, token.at, token.text.length);
      hasOffset ||= entry.offset === true;
      base = { factor: entry.factor, dimension: [...entry.dimension] };
      index++;
    } else if (token.kind === "number") {
      const value = Number(token.text);
      if (!(value > 0)) throw new UnitError("value", "a unit's number must be positive", token.at, token.text.length);
      base = { factor: value, dimension: [...DIMENSIONLESS] };
      index++;
    } else if (token.kind === "(") {
      index++;
      base = unit();
      if (tokens[index]?.kind !== ")") fail(`expected ")"`);
      index++;
    } else return fail(`unexpected "${token.text}"`);
    if (tokens[index]?.text !== "^") return base;
    index++;
    // A negative exponent is written without parentheses (s^-1) or inside them (s^(-1)).
    const parenthesized = tokens[index]?.kind === "(";
    if (parenthesized) index++;
    const negative = tokens[index]?.text === "-";
    if (negative) index++;
    if (tokens[index]?.kind !== "number") fail("a power needs a number");
    const exponent = (negative ? -1 : 1) * Number(tokens[index]!.text);
    index++;
    if (parenthesized) {
      if (tokens[index]?.kind !== ")") fail(`expected ")"`);
      index++;
    }
    return { factor: base.factor ** exponent, dimension: base.dimension.map((d) => (d === 0 ? 0 : d * exponent)) };
  }

  const result = unit();
  if (index < tokens.length) fail(`unexpected "${tokens[index]!.text}"`);
  return { factor: result.factor, dimension: result.dimension, hasOffset };
}

/** True when the two dimensions agree (angle included). */
export function sameUnitDimension(a: UnitDimension, b: UnitDimension): boolean {
  return a.every((x, i) => Math.abs(x - b[i]!) < 1e-12);
}

/** Whether the text is a plane angle (rad, deg, rev, possibly with a number): a coordinate to wrap modulo 2π. */
export function isAngleUnitText(text: string): boolean {
  try {
    const { dimension } = parseUnitText(text);
    return dimension.every((d, i) => (i === ANGLE_INDEX ? d === 1 : d === 0));
  } catch {
    return false;
  }
}

/** The coherent SI unit of a dimension, over base symbols (`m`, `rad/s`, `kg*m^2/s^2`; `1` when dimensionless). */
export function siUnitText(dimension: UnitDimension): string {
  const power = (symbol: string, p: number) => (p === 1 ? symbol : `${symbol}^${Number.isInteger(p) ? p : `(${+p.toFixed(6)})`}`);
  const up = DIMENSION_SYMBOLS.flatMap((s, i) => (dimension[i]! > 0 ? [power(s, dimension[i]!)] : []));
  const down = DIMENSION_SYMBOLS.flatMap((s, i) => (dimension[i]! < 0 ? [power(s, -dimension[i]!)] : []));
  let text = up.length === 0 ? "1" : up.join("*");
  if (down.length > 0) text += `/${down.length === 1 ? down[0] : `(${down.join("*")})`}`;
  return text;
}
