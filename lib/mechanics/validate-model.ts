import { z } from "zod";
import { ExpressionError, ModelError } from "./errors";
import { RESERVED_NAMES, TIME, walk, type Expr } from "./expr/ast";
import { greekAdvice, hasGreekLetter } from "./expr/greek";
import { parseExpression } from "./expr/parse";
import type { Model } from "./model";

import { DEFAULT_MODEL_LIMITS, type ModelLimits } from "./limits";

export { DEFAULT_MODEL_LIMITS, type ModelLimits };

const IDENTIFIER = /^[A-Za-z_][A-Za-z0-9_]*$/;
const identifier = z
  .string()
  .max(64, "names are at most 64 characters")
  .refine((name) => IDENTIFIER.test(name), {
    error: (issue) => {
      const name = String(issue.input);
      return hasGreekLetter(name) ? `"${name}": ${greekAdvice(name)}` : "a name is a letter or _ followed by letters, digits or _";
    },
  });
const unit = z.string().max(200);
const description = z.string().max(4000).optional();
const namedUnit = z.object({ name: identifier, unit, description });
const parameter = namedUnit.extend({ value: z.number().refine(Number.isFinite, "value must be a finite number").optional() });
const definition = z.object({ name: identifier, expr: z.string(), description });
const constraint = z.object({ name: identifier, expr: z.string(), description });
const output = z.object({ name: identifier, expr: z.string(), unit, description });

const modelSchema = z.object({
  title: z.string().max(300),
  coordinates: z.array(namedUnit).min(1, "a model needs at least one coordinate"),
  parameters: z.array(parameter),
  inputs: z.array(namedUnit).optional(),
  definitions: z.array(definition).optional(),
  kinetic: z.string(),
  potential: z.string(),
  dissipation: z.string().optional(),
  forces: z.record(z.string(), z.string()).optional(),
  constraints: z.array(constraint).optional(),
  rateConstraints: z.array(constraint).optional(),
  outputs: z.array(output).optional(),
});

/** The parsed trees of a model, its definitions in dependency order. */
export interface ModelAnalysis {
  model: Model;
  definitions: Expr[];
  /** Indices into model.definitions, each after every definition it refers to. */
  definitionOrder: number[];
  kinetic: Expr;
  potential: Expr;
  dissipation: Expr | null;
  forces: Map<string, Expr>;
  /** Parsed position constraints, rate constraints and outputs, in model order. */
  constraints: Expr[];
  rateConstraints: Expr[];
  outputs: Expr[];
}

type SymbolRole = "coordinate" | "parameter" | "input" | "definition" | "multiplier";

/** Collects problems (`collectModelIssues`) or stops at the first (`validateModel`, `analyzeModel`). */
type Report = (issue: ModelError) => void;

/**
 * Checks a parsed JSON value against the model file format and returns it as a
 * `Model`. Throws `ModelError` naming the field (`definitions[1].expr`) and,
 * inside an expression, the 1-based column.
 *
 * @example validateModel(JSON.parse(text)) // throws ModelError("unknown_symbol", "kinetic", …, 12)
 */
export function validateModel(input: unknown, limits: ModelLimits = DEFAULT_MODEL_LIMITS): Model {
  const result = collectModelIssues(input, limits);
  if (result.issues.length > 0) throw result.issues[0]!;
  return result.model!;
}

/**
 * Every problem of a model file at once, in the order `validateModel` meets
 * them: sizes, then the file format (every field at fault), then names and
 * expressions (one parse error per expression, every unknown name). Stops
 * after a stage with problems, since later stages read what earlier ones check.
 *
 * @example collectModelIssues(JSON.parse(text)).issues.map((issue) => issue.toLine())
 */
export function collectModelIssues(input: unknown, limits: ModelLimits = DEFAULT_MODEL_LIMITS): { model: Model | null; issues: ModelError[] } {
  const issues: ModelError[] = [];
  const report: Report = (issue) => issues.push(issue);
  checkSizes(input, limits, report);
  if (issues.length > 0) return { model: null, issues };
  const parsed = modelSchema.safeParse(input);
  if (!parsed.success) {
    for (const issue of parsed.error.issues) issues.push(new ModelError("schema", formatPath(issue.path) || "model", issue.message));
    return { model: null, issues };
  }
  const model: Model = stripUndefined(parsed.data);
  analyze(model, report);
  return issues.length > 0 ? { model: null, issues } : { model, issues };
}

function stripUndefined(data: z.infer<typeof modelSchema>): Model {
  const model: Model = {
    title: data.title,
    coordinates: data.coordinates.map(({ name, unit, description }) => (description === undefined ? { name, unit } : { name, unit, description })),
    parameters: data.parameters.map(({ name, unit, value, description }) => ({
      name,
      unit,
      ...(value === undefined ? {} : { value }),
      ...(description === undefined ? {} : { description }),
    })),
    kinetic: data.kinetic,
    potential: data.potential,
  };
  if (data.inputs) model.inputs = data.inputs.map(({ name, unit, description }) => (description === undefined ? { name, unit } : { name, unit, description }));
  if (data.definitions)
    model.definitions = data.definitions.map(({ name, expr, description }) => (description === undefined ? { name, expr } : { name, expr, description }));
  if (data.dissipation !== undefined) model.dissipation = data.dissipation;
  if (data.forces) model.forces = data.forces;
  const named = <T extends { description?: string | undefined }>({ description, ...rest }: T) => (description === undefined ? rest : { ...rest, description });
  if (data.constraints) model.constraints = data.constraints.map(named);
  if (data.rateConstraints) model.rateConstraints = data.rateConstraints.map(named);
  if (data.outputs) model.outputs = data.outputs.map(named);
  return model;
}

function formatPath(path: readonly PropertyKey[]): string {
  let out = "";
  for (const part of path) {
    if (typeof part === "number") out += `[${part}]`;
    else out += out === "" ? String(part) : `.${String(part)}`;
  }
  return out;
}

/** Refuses oversized models before looking at their content. */
function checkSizes(input: unknown, limits: ModelLimits, report: Report): void {
  if (typeof input !== "object" || input === null || Array.isArray(input)) return report(new ModelError("schema", "model", "a model is a JSON object"));
  const record = input as Record<string, unknown>;
  const counts: [string, number][] = [
    ["coordinates", limits.maxCoordinates],
    ["parameters", limits.maxParameters],
    ["inputs", limits.maxInputs],
    ["definitions", limits.maxDefinitions],
  ];
  for (const [field, max] of counts) {
    const value = record[field];
    if (Array.isArray(value) && value.length > max) report(new ModelError("too_large", field, `at most ${max} ${field} are allowed (found ${value.length})`));
  }
  let total = 0;
  const add = (value: unknown) => {
    if (typeof value === "string") total += value.length;
  };
  add(record.kinetic);
  add(record.potential);
  add(record.dissipation);
  if (Array.isArray(record.definitions)) for (const d of record.definitions) if (d && typeof d === "object") add((d as Record<string, unknown>).expr);
  for (const key of ["constraints", "rateConstraints", "outputs"]) {
    const list = record[key];
    if (Array.isArray(list)) {
      if (list.length > limits.maxConstraints)
        report(new ModelError("too_large", key, `at most ${limits.maxConstraints} ${key} are allowed (found ${list.length})`));
      for (const c of list) if (c && typeof c === "object") add((c as Record<string, unknown>).expr);
    }
  }
  if (record.forces && typeof record.forces === "object") {
    const forces = Object.values(record.forces as Record<string, unknown>);
    if (forces.length > limits.maxCoordinates) report(new ModelError("too_large", "forces", `at most ${limits.maxCoordinates} forces are allowed`));
    for (const f of forces) add(f);
  }
  if (total > limits.maxTotalTextLength) {
    report(new ModelError("too_large", "model", `the expressions total ${total} characters; at most ${limits.maxTotalTextLength} are allowed`));
  }
}

/**
 * Parses every expression of a model and checks names and references.
 * Used by validateModel and by deriveModel (which also accepts models built in code).
 */
export function analyzeModel(model: Model, limits: ModelLimits = DEFAULT_MODEL_LIMITS): ModelAnalysis {
  const fail: Report = (issue) => {
    throw issue;
  };
  checkSizes(model, limits, fail);
  return analyze(model, fail)!;
}

/** The analysis, or null when `report` was given a problem (and returned, when collecting). */
function analyze(model: Model, report: Report): ModelAnalysis | null {
  let problems = 0;
  const problem: Report = (issue) => {
    problems++;
    report(issue);
  };
  const roles = new Map<string, SymbolRole>();
  const definitionIndex = new Map<string, number>();
  const declare = (name: string, role: SymbolRole, field: string) => {
    if (RESERVED_NAMES.has(name)) return problem(new ModelError("reserved_name", field, `"${name}" is reserved and cannot be used as a name`));
    if (roles.has(name)) return problem(new ModelError("duplicate_name", field, `"${name}" is already declared as a ${roles.get(name)}`));
    roles.set(name, role);
  };
  model.coordinates.forEach((c, i) => declare(c.name, "coordinate", `coordinates[${i}].name`));
  model.parameters.forEach((p, i) => declare(p.name, "parameter", `parameters[${i}].name`));
  (model.inputs ?? []).forEach((u, i) => declare(u.name, "input", `inputs[${i}].name`));
  const definitions = model.definitions ?? [];
  definitions.forEach((d, i) => {
    declare(d.name, "definition", `definitions[${i}].name`);
    definitionIndex.set(d.name, i);
  });

  const parse = (text: string, field: string): Expr | null => {
    let tree: Expr;
    try {
      tree = parseExpression(text);
    } catch (error) {
      if (error instanceof ExpressionError) {
        problem(ModelError.fromExpression(field, error));
        return null;
      }
      throw error;
    }
    checkSymbols(tree, field, roles, problem);
    return tree;
  };

  const definitionTrees = definitions.map((d, i) => parse(d.expr, `definitions[${i}].expr`));
  let definitionOrder: number[] = [];
  try {
    definitionOrder = orderDefinitions(
      definitions.map((d) => d.name),
      definitionTrees,
      definitionIndex,
    );
  } catch (error) {
    if (!(error instanceof ModelError)) throw error;
    problem(error);
  }

  // Highest time-derivative order of coordinates inside each definition.
  const definitionOrderOf = new Array<number>(definitions.length).fill(0);
  for (const i of definitionOrder) {
    const tree = definitionTrees[i];
    if (tree) definitionOrderOf[i] = derivativeOrder(tree, definitionIndex, definitionOrderOf).order;
  }

  const energy = (text: string, field: string, what: string): Expr | null => {
    const tree = parse(text, field);
    if (!tree) return null;
    const found = derivativeOrder(tree, definitionIndex, definitionOrderOf);
    if (found.order > 1) {
      problem(
        new ModelError(
          "unsupported",
          field,
          `the ${what} may depend on rates but not on accelerations`,
          found.node!.start + 1,
          found.node!.end - found.node!.start,
        ),
      );
    }
    return tree;
  };
  const kinetic = energy(model.kinetic, "kinetic", "kinetic energy");
  const potential = energy(model.potential, "potential", "potential energy");
  const dissipation =
    model.dissipation === undefined || model.dissipation.trim() === "" ? null : energy(model.dissipation, "dissipation", "dissipation function");

  const forces = new Map<string, Expr>();
  for (const [coordinate, text] of Object.entries(model.forces ?? {})) {
    const field = `forces.${coordinate}`;
    if (roles.get(coordinate) !== "coordinate") {
      problem(new ModelError("unknown_symbol", field, `generalized force for "${coordinate}", which is not a coordinate`));
      continue;
    }
    const tree = parse(text, field);
    if (tree) forces.set(coordinate, tree);
  }
  const constraintNames = new Map<string, string>();
  const multiplierRoles = new Map(roles);
  const constraintList = (list: readonly { name: string; expr: string }[] | undefined, key: "constraints" | "rateConstraints"): Expr[] =>
    (list ?? []).map((c, i) => {
      const field = `${key}[${i}]`;
      const earlier = constraintNames.get(c.name);
      if (earlier !== undefined) problem(new ModelError("duplicate_name", `${field}.name`, `"${c.name}" is already the name of ${earlier}`));
      constraintNames.set(c.name, field);
      const symbol = `${key === "constraints" ? "lambda" : "mu"}_${c.name}`;
      if (roles.has(symbol)) {
        problem(new ModelError("duplicate_name", `${field}.name`, `its multiplier "${symbol}" is already declared as a ${roles.get(symbol)}`));
      } else multiplierRoles.set(symbol, "multiplier");
      const tree = parse(c.expr, `${field}.expr`);
      if (!tree) return null;
      const found = derivativeOrder(tree, definitionIndex, definitionOrderOf);
      const allowed = key === "constraints" ? 0 : 1;
      if (found.order > allowed) {
        const what =
          key === "constraints"
            ? "a position constraint may not depend on rates (write it under rateConstraints)"
            : "a rate constraint may not depend on accelerations";
        problem(new ModelError("unsupported", `${field}.expr`, what, found.node!.start + 1, found.node!.end - found.node!.start));
      }
      walk(tree, (node) => {
        if (node.kind === "sym" && roles.get(node.name) === "input") {
          problem(
            new ModelError("unsupported", `${field}.expr`, `a constraint may not depend on the input "${node.name}"`, node.start + 1, node.end - node.start),
          );
        }
      });
      return tree;
    }) as Expr[];
  const constraints = constraintList(model.constraints, "constraints");
  const rateConstraints = constraintList(model.rateConstraints, "rateConstraints");
  const outputNames = new Set<string>();
  const outputs = (model.outputs ?? []).map((o, i) => {
    const field = `outputs[${i}]`;
    if (outputNames.has(o.name)) problem(new ModelError("duplicate_name", `${field}.name`, `"${o.name}" is already the name of an output`));
    outputNames.add(o.name);
    let tree: Expr;
    try {
      tree = parseExpression(o.expr);
    } catch (error) {
      if (error instanceof ExpressionError) {
        problem(ModelError.fromExpression(`${field}.expr`, error));
        return null;
      }
      throw error;
    }
    checkSymbols(tree, `${field}.expr`, multiplierRoles, problem);
    return tree;
  }) as Expr[];
  if (problems > 0 || !kinetic || !potential) return null;
  return { model, definitions: definitionTrees as Expr[], definitionOrder, kinetic, potential, dissipation, forces, constraints, rateConstraints, outputs };
}

function checkSymbols(tree: Expr, field: string, roles: Map<string, SymbolRole>, report: Report): void {
  walk(tree, (node) => {
    if (node.kind !== "sym") return;
    const column = node.start + 1;
    const length = node.end - node.start;
    if (node.name === TIME) {
      if (node.order > 0) report(new ModelError("rate_of_parameter", field, `t is the time; its rate is 1`, column, length));
      return;
    }
    const role = roles.get(node.name);
    if (role === undefined) return report(new ModelError("unknown_symbol", field, `unknown symbol "${node.name}"`, column, length));
    if (node.order > 0 && (role === "parameter" || role === "input" || role === "multiplier")) {
      const what = role === "parameter" ? "a parameter" : role === "input" ? "an input" : "a multiplier";
      report(new ModelError("rate_of_parameter", field, `"${node.name}" is ${what} and has no rate`, column, length));
    }
  });
}

/** Highest derivative order of coordinates an expression reaches (q'' → 2, x1' with x1 = l*sin(q) → 1). */
function derivativeOrder(tree: Expr, definitionIndex: Map<string, number>, definitionOrderOf: number[]): { order: number; node: Expr | null } {
  let best = 0;
  let at: Expr | null = null;
  walk(tree, (node) => {
    if (node.kind !== "sym") return;
    const index = definitionIndex.get(node.name);
    const order = node.order + (index === undefined ? 0 : definitionOrderOf[index]!);
    if (order > best) {
      best = order;
      at = node;
    }
  });
  return { order: best, node: at };
}

/** Topological order of definitions; a cycle is reported at the reference that closes it. */
function orderDefinitions(names: string[], trees: (Expr | null)[], index: Map<string, number>): number[] {
  const refs = trees.map((tree) => {
    const out: { target: number; node: Expr }[] = [];
    if (tree)
      walk(tree, (node) => {
        if (node.kind === "sym" && index.has(node.name)) out.push({ target: index.get(node.name)!, node });
      });
    return out;
  });
  const state = new Array<0 | 1 | 2>(names.length).fill(0);
  const order: number[] = [];
  const stack: number[] = [];
  const visit = (i: number) => {
    state[i] = 1;
    stack.push(i);
    for (const { target, node } of refs[i]!) {
      if (state[target] === 1) {
        const cycle = stack.slice(stack.indexOf(target)).map((k) => names[k]!);
        cycle.push(names[target]!);
        throw new ModelError(
          "circular_definition",
          `definitions[${i}].expr`,
          `circular definition: ${cycle.join(" → ")}`,
          node.start + 1,
          node.end - node.start,
        );
      }
      if (state[target] === 0) visit(target);
    }
    stack.pop();
    state[i] = 2;
    order.push(i);
  };
  for (let i = 0; i < names.length; i++) if (state[i] === 0) visit(i);
  return order;
}
