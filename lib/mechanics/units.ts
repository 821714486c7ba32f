import { isAngleUnitText, MODEL_UNIT_SYMBOLS, parseUnitText, UnitError } from "../units";
import { constantValue } from "./differentiate";
import { ModelError } from "./errors";
import type { Expr } from "./expr/ast";
import { DEFAULT_PARSE_LIMITS, DERIVED_EXPRESSION_LIMITS, expressionTree, formatExpression, parseExpression, type ExpressionSource } from "./expr/parse";
import type { Model } from "./model";
import { topLevelTerms } from "./terms";

/**
 * Units of coordinates, parameters and inputs, and a dimensional check of a
 * model. Unit text is read by lib/units (the same reader as the notebook's
 * field checks); we keep only the exponents of the base dimensions and drop
 * the angle, so a radian is dimensionless throughout
 * (a torque N*m is then the generalized force of an angle, as energy/rad).
 */

/** Exponents of kg, m, s, A, K, cd, mol (the angle is dropped). */
export type Dimension = readonly number[];

const BASE_SYMBOLS = ["kg", "m", "s", "A", "K", "cd", "mol"] as const;

export const DIMENSIONLESS: Dimension = [0, 0, 0, 0, 0, 0, 0];
export const ENERGY: Dimension = [1, 2, -2, 0, 0, 0, 0];
export const POWER: Dimension = [1, 2, -3, 0, 0, 0, 0];
export const TIME_DIMENSION: Dimension = [0, 0, 1, 0, 0, 0, 0];

const NAMED: [Dimension, string][] = [
  [ENERGY, "J"],
  [POWER, "W"],
  [[1, 1, -2, 0, 0, 0, 0], "N"],
  [[1, -1, -2, 0, 0, 0, 0], "Pa"],
];

/**
 * Parses unit text such as `N*m/rad`, `kg*m^2`, `m/s^2`, `1/s` or `1`.
 * Throws ModelError("unit", field, …) for text that does not read or a
 * symbol outside kg, m, s, rad, N, J, W, Pa, Hz, with its column.
 *
 * @example parseUnit("N*m") // [1, 2, -2, 0, 0, 0, 0]
 */
export function parseUnit(text: string, field = "unit"): Dimension {
  if (text.trim() === "") return DIMENSIONLESS;
  try {
    return parseUnitText(text, { symbols: MODEL_UNIT_SYMBOLS }).dimension.slice(0, BASE_SYMBOLS.length);
  } catch (error) {
    if (error instanceof UnitError) throw new ModelError("unit", field, error.message, error.position + 1, error.length);
    throw error;
  }
}

/** Whether unit text is an angle (rad, possibly with a number), i.e. a coordinate to wrap modulo 2π. */
export function isAngleUnit(text: string): boolean {
  return isAngleUnitText(text);
}

export function sameDimension(a: Dimension, b: Dimension): boolean {
  return a.every((x, i) => Math.abs(x - b[i]!) < 1e-12);
}

export const multiplyDimensions = (a: Dimension, b: Dimension): Dimension => a.map((x, i) => x + b[i]!);
export const divideDimensions = (a: Dimension, b: Dimension): Dimension => a.map((x, i) => x - b[i]!);
export const powerOfDimension = (a: Dimension, k: number): Dimension => a.map((x) => x * k);

/**
 * Writes a dimension over base symbols, with its name where it has one:
 * `kg*m^2/s^2 (J)`, `m/s`, `1` for dimensionless.
 */
export function formatDimension(d: Dimension): string {
  const power = (symbol: string, p: number) => (p === 1 ? symbol : `${symbol}^${Number.isInteger(p) ? p : `(${+p.toFixed(6)})`}`);
  const up = BASE_SYMBOLS.flatMap((s, i) => (d[i]! > 0 ? [power(s, d[i]!)] : []));
  const down = BASE_SYMBOLS.flatMap((s, i) => (d[i]! < 0 ? [power(s, -d[i]!)] : []));
  let text = up.length === 0 ? "1" : up.join("*");
  if (down.length > 0) text += "/" + (down.length === 1 ? down[0] : down.join("/"));
  const named = NAMED.find(([dim]) => sameDimension(dim, d));
  return named ? `${text} (${named[1]})` : text;
}

/**
 * The unit of an expression, or null for the literal 0 (which fits any unit).
 * `symbolUnits` gives each identifier's unit (text or dimension); a rate q'
 * has unit(q)/s, an acceleration unit(q)/s², `t` has s. Throws
 * ModelError("unit_mismatch", field, …) naming the offending term, with its
 * column in `text` when the expression came from text.
 *
 * @example unitOfExpression("1/2*m*x'^2", { m: "kg", x: "m" }) // [1, 2, -2, 0, 0, 0, 0]
 */
export function unitOfExpression(expr: string | Expr, symbolUnits: Readonly<Record<string, string | Dimension>>, field = "expression"): Dimension | null {
  const text = typeof expr === "string" ? expr : null;
  const tree = typeof expr === "string" ? ModelError.inField(field, () => parseExpression(expr)) : expr;
  const lookup = (name: string): Dimension | undefined => {
    const u = symbolUnits[name];
    return u === undefined ? undefined : typeof u === "string" ? parseUnit(u, field) : u;
  };
  return new UnitInference(lookup, field, text).of(tree);
}

class UnitInference {
  constructor(
    private readonly lookup: (name: string) => Dimension | undefined,
    private readonly field: string,
    private readonly text: string | null,
  ) {}

  quote(e: Expr): string {
    return `"${this.text !== null && e.end > e.start ? this.text.slice(e.start, e.end) : formatExpression(e)}"`;
  }

  fail(e: Expr, message: string): never {
    const column = this.text !== null && e.end > e.start ? e.start + 1 : null;
    throw new ModelError("unit_mismatch", this.field, message, column, Math.max(1, e.end - e.start));
  }

  of(e: Expr): Dimension | null {
    switch (e.kind) {
      case "num":
        return e.value === 0 ? null : DIMENSIONLESS;
      case "pi":
        return DIMENSIONLESS;
      case "sym": {
        const base = e.name === "t" ? TIME_DIMENSION : this.lookup(e.name);
        if (base === undefined) {
          const column = this.text !== null && e.end > e.start ? e.start + 1 : null;
          throw new ModelError("unknown_symbol", this.field, `unknown symbol "${e.name}"`, column, e.end - e.start);
        }
        return e.order === 0 ? base : divideDimensions(base, powerOfDimension(TIME_DIMENSION, e.order));
      }
      case "neg":
        return this.of(e.arg);
      case "bin":
        switch (e.op) {
          case "+":
          case "-":
            return this.sum(e);
          case "*": {
            const a = this.of(e.left);
            const b = this.of(e.right);
            return a === null || b === null ? null : multiplyDimensions(a, b);
          }
          case "/": {
            const a = this.of(e.left);
            const b = this.of(e.right);
            if (a === null) return null;
            return b === null ? a : divideDimensions(a, b);
          }
          case "^": {
            const base = this.of(e.left);
            const exponent = this.of(e.right);
            if (exponent !== null && !sameDimension(exponent, DIMENSIONLESS)) {
              this.fail(e.right, `the exponent ${this.quote(e.right)} has unit ${formatDimension(exponent)} but must be dimensionless`);
            }
            if (base === null) return null;
            if (sameDimension(base, DIMENSIONLESS)) return DIMENSIONLESS;
            const k = constantValue(e.right);
            if (k === null)
              this.fail(e.right, `${this.quote(e.left)} has unit ${formatDimension(base)}, so its exponent ${this.quote(e.right)} must be a number`);
            return powerOfDimension(base, k);
          }
        }
        break;
      case "call": {
        const arg = this.of(e.arg);
        if (e.fn === "sqrt") return arg === null ? null : powerOfDimension(arg, 0.5);
        if (e.fn === "abs") return arg;
        if (arg !== null && !sameDimension(arg, DIMENSIONLESS)) {
          this.fail(e.arg, `the argument ${this.quote(e.arg)} of ${e.fn} has unit ${formatDimension(arg)} but must be dimensionless`);
        }
        return DIMENSIONLESS;
      }
    }
    return DIMENSIONLESS;
  }

  /**
   * The unit of a sum whose terms must agree. When they do not, the term
   * blamed (underlined) is one that disagrees with the unit most terms share;
   * on a tie the earlier terms set the unit, so the later one is blamed.
   * checkModelUnits checks a cell's top-level terms against the cell's
   * expected unit instead, which decides even a two-term tie.
   */
  private sum(e: Expr): Dimension | null {
    const terms: { term: Expr; unit: Dimension }[] = [];
    for (const { term } of topLevelTerms(e)) {
      const unit = this.of(term);
      if (unit !== null) terms.push({ term, unit });
    }
    if (terms.length === 0) return null;
    const majority = terms.reduce((best, candidate) => {
      const count = (unit: Dimension) => terms.filter((t) => sameDimension(t.unit, unit)).length;
      return count(candidate.unit) > count(best.unit) ? candidate : best;
    });
    const odd = terms.find((t) => !sameDimension(t.unit, majority.unit));
    if (odd) {
      this.fail(
        odd.term,
        `the term ${this.quote(odd.term)} has unit ${formatDimension(odd.unit)} but ${this.quote(majority.term)} has unit ${formatDimension(majority.unit)}`,
      );
    }
    return majority.unit;
  }
}

/**
 * Units of a model's symbols: declared ones, definitions inferred from their
 * expressions, and the multipliers of its constraints: λ_k has unit
 * J / unit(g_k), μ_k has J / (unit(rate expression) · s), so that each
 * multiplier term of a residual is a generalized force.
 */
function unitTable(model: Model): {
  units: Map<string, Dimension>;
  lookup: (name: string) => Dimension | undefined;
  infer: (text: string, field: string) => Dimension | null;
} {
  const units = new Map<string, Dimension>();
  const declare = (list: readonly { name: string; unit: string }[] | undefined, key: string) =>
    (list ?? []).forEach((item, i) => units.set(item.name, parseUnit(item.unit ?? "", `${key}[${i}].unit`)));
  declare(model.coordinates, "coordinates");
  declare(model.parameters, "parameters");
  declare(model.inputs, "inputs");

  // Definitions get their unit from their expression, in dependency order.
  const definitions = new Map((model.definitions ?? []).map((d, i) => [d.name, { d, i }]));
  const inProgress = new Set<string>();
  const lookup = (name: string): Dimension | undefined => {
    const known = units.get(name);
    if (known !== undefined) return known;
    const entry = definitions.get(name);
    if (entry === undefined) return undefined;
    const field = `definitions[${entry.i}].expr`;
    if (inProgress.has(name)) throw new ModelError("circular_definition", field, `definition "${name}" refers to itself`);
    inProgress.add(name);
    const unit = infer(entry.d.expr, field) ?? DIMENSIONLESS;
    inProgress.delete(name);
    units.set(name, unit);
    return unit;
  };
  function infer(text: string, field: string): Dimension | null {
    return new UnitInference(lookup, field, text).of(ModelError.inField(field, () => parseExpression(text)));
  }
  for (const name of definitions.keys()) lookup(name);
  const multiplier = (list: readonly { name: string; expr: string }[] | undefined, key: "constraints" | "rateConstraints") =>
    (list ?? []).forEach((c, i) => {
      const unit = infer(c.expr, `${key}[${i}].expr`) ?? DIMENSIONLESS;
      const symbol = `${key === "constraints" ? "lambda" : "mu"}_${c.name}`;
      units.set(symbol, divideDimensions(ENERGY, key === "constraints" ? unit : multiplyDimensions(unit, TIME_DIMENSION)));
    });
  multiplier(model.constraints, "constraints");
  multiplier(model.rateConstraints, "rateConstraints");
  return { units, lookup, infer };
}

/** Units of a model's multipliers by symbol (`lambda_rope`: N). Throws ModelError like checkModelUnits. */
export function multiplierUnits(model: Model): Record<string, Dimension> {
  const { units } = unitTable(model);
  const out: Record<string, Dimension> = {};
  for (const c of model.constraints ?? []) out[`lambda_${c.name}`] = units.get(`lambda_${c.name}`)!;
  for (const c of model.rateConstraints ?? []) out[`mu_${c.name}`] = units.get(`mu_${c.name}`)!;
  return out;
}

/**
 * Checks a model's units: T and V are energies, D a power, each generalized
 * force has unit J / unit(q), every definition has a consistent unit, the
 * arguments of sin, cos, exp… are dimensionless and the terms of every sum
 * agree; constraints are consistent and outputs have their stated unit. With `equations` (from the derivation, as trees), every top-level
 * term of each residual must have the unit of its coordinate's generalized force.
 * Throws ModelError("unit" | "unit_mismatch" | "unknown_symbol", field, …).
 *
 * @example checkModelUnits(model, derived.equations)
 */
export function checkModelUnits(model: Model, equations?: readonly { coordinate: string; residual: ExpressionSource }[]): void {
  const { units, lookup, infer } = unitTable(model);
  const expectEachTerm = (source: ExpressionSource, field: string, expected: Dimension, what: string, derived = false) => {
    // The model's text is pointed at by column; a derived equation is quoted by its printed term.
    const tree = expressionTree(source, derived ? DERIVED_EXPRESSION_LIMITS : DEFAULT_PARSE_LIMITS);
    const inference = new UnitInference(lookup, field, typeof source === "string" && !derived ? source : null);
    // Each top-level term against the cell's unit (inner sums by majority inside
    // inference.of), so the term underlined is the one that is not, say, an energy.
    for (const { term } of topLevelTerms(tree)) {
      const unit = inference.of(term);
      if (unit !== null && !sameDimension(unit, expected)) {
        inference.fail(term, `the term ${inference.quote(term)} of ${what} has unit ${formatDimension(unit)} but must have ${formatDimension(expected)}`);
      }
    }
  };

  expectEachTerm(model.kinetic, "kinetic", ENERGY, "the kinetic energy");
  expectEachTerm(model.potential, "potential", ENERGY, "the potential energy");
  if (model.dissipation !== undefined && model.dissipation.trim() !== "") expectEachTerm(model.dissipation, "dissipation", POWER, "the dissipation function");

  const generalizedForceUnit = (coordinate: string) => divideDimensions(ENERGY, units.get(coordinate) ?? DIMENSIONLESS);
  for (const [coordinate, text] of Object.entries(model.forces ?? {})) {
    expectEachTerm(text, `forces.${coordinate}`, generalizedForceUnit(coordinate), `the generalized force on ${coordinate}`);
  }
  (model.outputs ?? []).forEach((o, i) => {
    const declared = parseUnit(o.unit, `outputs[${i}].unit`);
    const unit = infer(o.expr, `outputs[${i}].expr`);
    if (unit !== null && !sameDimension(unit, declared)) {
      throw new ModelError(
        "unit_mismatch",
        `outputs[${i}].expr`,
        `the output "${o.name}" has unit ${formatDimension(unit)} but its unit is given as ${formatDimension(declared)}`,
      );
    }
  });
  (equations ?? []).forEach((equation, i) => {
    expectEachTerm(equation.residual, `equations[${i}].residual`, generalizedForceUnit(equation.coordinate), `the equation of ${equation.coordinate}`, true);
  });
}
