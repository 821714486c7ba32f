import { ModelError } from "../errors";
import { expressionTree, type ExpressionSource } from "../expr/parse";
import { residualJacobians } from "../jacobians";
import { hoistCommonSubexpressions, printHoisted, type PrintedFunction, type Syntax } from "./cse";
import { safetyNote } from "../../domain";

export type CodeLanguage = "c" | "python" | "julia" | "matlab" | "typescript";
export const CODE_LANGUAGES: readonly CodeLanguage[] = ["c", "python", "julia", "matlab", "typescript"];

export interface CodeExportInput {
  /** Identifier used for the generated names (sanitised); default "model". */
  name?: string;
  title?: string;
  coordinates: readonly string[];
  /** In the order of the generated `p` vector; `value` becomes the default. */
  parameters: readonly { name: string; value?: number; unit?: string }[];
  inputs?: readonly string[];
  /** Trees, or text (parsed once here). */
  massMatrix: readonly (readonly ExpressionSource[])[];
  forcing: readonly ExpressionSource[];
}

/** Which array a variable slot lives in, and its 0-based index there. */
export type SlotReference = { array: "q" | "qd" | "qdd" | "p" | "u"; index: number } | { array: "t" };

/** The model ready for emitting: sizes, names, and hoisted expression sets for M, f and the residual Jacobians. */
export interface PreparedModel {
  name: string;
  title: string;
  n: number;
  m: number;
  coordinates: string[];
  inputs: string[];
  parameters: { name: string; value?: number; unit?: string }[];
  /** Prints M (n×n row-major outputs), f (n outputs) and [∂r/∂q, ∂r/∂q', ∂r/∂u] (row-major) for a language. */
  print(
    syntax: Omit<Syntax, "variable">,
    reference: (slot: SlotReference) => string,
  ): { mass: PrintedFunction; forcing: PrintedFunction; jacobians: PrintedFunction };
}

export function prepareModel(input: CodeExportInput): PreparedModel {
  const coordinates = [...input.coordinates];
  const inputs = [...(input.inputs ?? [])];
  const parameters = input.parameters.map((p) => ({ ...p }));
  const n = coordinates.length;
  const m = inputs.length;
  if (input.massMatrix.length !== n || input.massMatrix.some((row) => row.length !== n) || input.forcing.length !== n) {
    throw new ModelError("schema", "massMatrix", `the mass matrix must be ${n}×${n} and the forcing of length ${n}`);
  }
  const variables = [...coordinates, ...coordinates.map((q) => `${q}'`), ...coordinates.map((q) => `${q}''`), "t", ...inputs, ...parameters.map((p) => p.name)];
  const slot = (index: number): SlotReference => {
    if (index < n) return { array: "q", index };
    if (index < 2 * n) return { array: "qd", index: index - n };
    if (index < 3 * n) return { array: "qdd", index: index - 2 * n };
    if (index === 3 * n) return { array: "t" };
    if (index < 3 * n + 1 + m) return { array: "u", index: index - 3 * n - 1 };
    return { array: "p", index: index - 3 * n - 1 - m };
  };
  const massTrees = input.massMatrix.map((row) => row.map((entry) => expressionTree(entry)));
  const forcingTrees = input.forcing.map((entry) => expressionTree(entry));
  const jac = residualJacobians({ coordinates, inputs, massMatrix: massTrees, forcing: forcingTrees });
  const mass = hoistCommonSubexpressions(massTrees.flat(), variables);
  const forcing = hoistCommonSubexpressions(forcingTrees, variables);
  const jacobians = hoistCommonSubexpressions([...jac.byCoordinate.flat(), ...jac.byRate.flat(), ...jac.byInput.flat()], variables);
  const name = (input.name ?? "model").replace(/[^A-Za-z0-9_]/g, "_").replace(/^([^A-Za-z])/, "m_$1") || "model";
  return {
    name,
    title: (input.title ?? name).replace(/[\r\n]+/g, " "),
    n,
    m,
    coordinates,
    inputs,
    parameters,
    print(syntax, reference) {
      const full: Syntax = { ...syntax, variable: (index) => reference(slot(index)) };
      return { mass: printHoisted(mass, full), forcing: printHoisted(forcing, full), jacobians: printHoisted(jacobians, full) };
    },
  };
}

/** A double literal that every target language reads as a double: `2.0`, `0.5`, `1.0e-3`. */
export function doubleLiteral(value: number): string {
  if (!Number.isFinite(value)) throw new RangeError(`cannot export the number ${value}`);
  const text = String(value);
  if (/[.e]/.test(text)) return text.includes("e") && !text.includes(".") ? text.replace("e", ".0e") : text;
  return `${text}.0`;
}

/** Comment lines describing the interface, shared by all languages. */
export function describeInterface(model: PreparedModel, base: 0 | 1): string[] {
  const list = (names: string[]) => names.map((name, i) => `${i + base}: ${name}`).join(", ") || "(none)";
  return [
    `${model.title} — equations of motion M(q, q', t, u) q'' = f(q, q', t, u), exported by Holonomy.`,
    `Arguments: coordinates (q), rates (q'), accelerations (q''), parameters and inputs (u) are arrays in the order listed here; t is the time.`,
    `Coordinates (rates in the same order): ${list(model.coordinates)}`,
    `Inputs: ${list(model.inputs)}`,
    `Parameters: ${model.parameters.map((p, i) => `${i + base}: ${p.name}${p.unit ? ` [${p.unit}]` : ""}${p.value === undefined ? " (no default)" : ` = ${p.value}`}`).join(", ") || "(none)"}`,
    `State-space matrices linearize q'' = M^-1 f at any state with x = [coordinates; rates]: dx/dt ≈ A x + B u.`,
    // The product's one safety note (lib/domain.ts, plain data), as on the pages and in the LaTeX export.
    safetyNote,
  ];
}
