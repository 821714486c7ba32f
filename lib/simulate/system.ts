import { compileExpressions } from "../mechanics/compile";
import { ExpressionError } from "../mechanics/errors";
import { SimulationSetupError } from "./errors";

/**
 * A mechanical system in mass-matrix form, M(q, t) q'' = f(q, q', t, u), as the
 * integrator sees it.
 *
 * All numeric functions read one packed vector of variable values, laid out as
 *
 *     [ q_1 … q_n,  q_1' … q_n',  t,  u_1 … u_m,  p_1 … p_k ]
 *
 * (coordinates, rates, time, inputs, parameters; `variableNames` gives the
 * names in that order). The integrator owns that vector and updates it in
 * place, so a compiled evaluator reads its arguments without any copying.
 */
export interface MechanicalSystem {
  readonly coordinateNames: readonly string[];
  readonly inputNames: readonly string[];
  readonly parameters: readonly SystemParameter[];
  /**
   * Fills `out[0 … n²)` with M row-major and `out[n² … n² + n)` with the forcing f.
   * Must not allocate: it runs at every right-hand-side evaluation.
   */
  readonly massForcing: MassForcingEvaluator;
  /** The energy function h(q, q', t, u, p), when the derivation provides one. */
  readonly energy?: EnergyEvaluator;
}

export interface SystemParameter {
  readonly name: string;
  /** Absent when the parameter is symbolic: a simulation must then supply a value. */
  readonly value?: number;
  readonly unit?: string;
}

export type MassForcingEvaluator = (values: Float64Array, out: Float64Array) => void;
export type EnergyEvaluator = (values: Float64Array) => number;

/** The variable names of the packed layout, in order: `q…`, `q'…`, `t`, inputs, parameters. */
export function variableNames(system: Pick<MechanicalSystem, "coordinateNames" | "inputNames" | "parameters">): string[] {
  return [
    ...system.coordinateNames,
    ...system.coordinateNames.map((name) => `${name}'`),
    "t",
    ...system.inputNames,
    ...system.parameters.map((p) => p.name),
  ];
}

/** Offsets into the packed variable vector. */
export interface VariableLayout {
  /** Number of coordinates n. */
  readonly n: number;
  /** Number of inputs m. */
  readonly m: number;
  /** Number of parameters k. */
  readonly k: number;
  readonly rates: number;
  readonly time: number;
  readonly inputs: number;
  readonly parameters: number;
  readonly length: number;
}

export function layoutOf(system: Pick<MechanicalSystem, "coordinateNames" | "inputNames" | "parameters">): VariableLayout {
  const n = system.coordinateNames.length;
  const m = system.inputNames.length;
  const k = system.parameters.length;
  return { n, m, k, rates: n, time: 2 * n, inputs: 2 * n + 1, parameters: 2 * n + 1 + m, length: 2 * n + 1 + m + k };
}

/**
 * A numeric evaluator compiled from expression strings: writes the value of
 * expression i into `out[i]`, reading the variables from `values` in the order
 * they were given at compile time.
 */
export interface CompiledExpressions {
  evaluate(values: Float64Array, out: Float64Array): void;
}

/** Compiles expression texts over named variables; the default is lib/mechanics/compile.ts. */
export type ExpressionCompiler = (texts: string[], variables: string[]) => CompiledExpressions;

const defaultCompiler: ExpressionCompiler = (texts, variables) => compileExpressions(texts, variables);

/** The mass-matrix form of a derivation as expression strings (the derive output). */
export interface MassMatrixForm {
  coordinates: readonly string[];
  inputs?: readonly string[];
  parameters: readonly SystemParameter[];
  /** n rows of n expressions. */
  massMatrix: readonly (readonly string[])[];
  /** n expressions. */
  forcing: readonly string[];
  /** The energy function h = Σ q'·∂L/∂q' − L, when known. */
  energy?: string | null;
}

/**
 * Builds a `MechanicalSystem` from the derivation's expression strings. The
 * strings are parsed and compiled once (never evaluated as program text); the
 * result is cheap to call at every step.
 *
 * @example
 * const system = systemFromMassMatrixForm(
 *   { coordinates: ["x"], parameters: [{ name: "m", value: 2 }, { name: "k", value: 8 }],
 *     massMatrix: [["m"]], forcing: ["-k*x"], energy: "1/2*m*x'^2 + 1/2*k*x^2" },
 * );
 */
export function systemFromMassMatrixForm(form: MassMatrixForm, compile: ExpressionCompiler = defaultCompiler): MechanicalSystem {
  const n = form.coordinates.length;
  if (n === 0) throw new SimulationSetupError("dimension", "coordinates", "the system has no coordinates");
  if (form.massMatrix.length !== n || form.massMatrix.some((row) => row.length !== n)) {
    throw new SimulationSetupError("dimension", "massMatrix", `the mass matrix must be ${n}×${n}`);
  }
  if (form.forcing.length !== n) {
    throw new SimulationSetupError("dimension", "forcing", `the forcing must have ${n} entries`);
  }
  const shape = { coordinateNames: form.coordinates, inputNames: form.inputs ?? [], parameters: form.parameters };
  const variables = variableNames(shape);
  const duplicate = variables.find((name, i) => variables.indexOf(name) !== i);
  if (duplicate !== undefined) {
    throw new SimulationSetupError("dimension", "variables", `the name "${duplicate}" is used twice`);
  }
  const fields = [
    ...form.massMatrix.flatMap((row, i) => row.map((_, j) => `massMatrix[${i}][${j}]`)),
    ...form.forcing.map((_, i) => `forcing[${i}]`),
  ];
  const massForcingCompiled = compileLocated([...form.massMatrix.flat(), ...form.forcing], fields, variables, compile);
  const massForcing: MassForcingEvaluator = (values, out) => massForcingCompiled.evaluate(values, out);

  let energy: EnergyEvaluator | undefined;
  if (form.energy) {
    const energyCompiled = compileLocated([form.energy], ["energy"], variables, compile);
    const energyOut = new Float64Array(1);
    energy = (values) => {
      energyCompiled.evaluate(values, energyOut);
      return energyOut[0]!;
    };
  }
  return { ...shape, massForcing, energy };
}

/**
 * Compiles a group of expressions; when one of them is refused, the error names
 * the field it came from (`massMatrix[0][1], column 7: unknown symbol "l3"`).
 */
export function compileLocated(texts: string[], fields: string[], variables: string[], compile: ExpressionCompiler = defaultCompiler): CompiledExpressions {
  try {
    return compile(texts, variables);
  } catch (error) {
    if (!(error instanceof ExpressionError)) throw error;
    // Find which text is at fault: compile them one by one.
    for (let i = 0; i < texts.length; i++) {
      try {
        compile([texts[i]!], variables);
      } catch (single) {
        if (single instanceof ExpressionError) {
          throw new SimulationSetupError("expression", fields[i]!, `column ${single.column}: ${single.message}`);
        }
        throw single;
      }
    }
    throw new SimulationSetupError("expression", fields.join(", "), error.message);
  }
}

