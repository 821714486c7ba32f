import { compileExpressions, type CompiledExpressions } from "../mechanics/compile";
import type { DerivationResult } from "../mechanics/derive";
import { ExpressionError } from "../mechanics/errors";
import type { ExpressionSource } from "../mechanics/expr/parse";
import type { Model } from "../mechanics/model";
import { multiplierSymbol, type ConstraintSpec, type OutputSpec } from "./specs";
import { stepKernelFactory, type Dop853Kernel, type StepKernelSource } from "./dop853-wasm";
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
  /**
   * Evaluators for fixed parameter values, with the values folded in as
   * constants at compile time (about half the work per call). They read the
   * same packed vector and ignore its parameter slots. Optional: without it
   * the integrator uses `massForcing` and `energy`.
   */
  readonly specialize?: (parameterValues: Readonly<Record<string, number>>) => SpecializedEvaluators;
  /**
   * True when the derivation found the energy function conserved (no explicit
   * t, no dissipation, no applied force): only then is its drift a check.
   */
  readonly energyConserved?: boolean;
  /**
   * Position and rate constraints (definitions written out); the forcing is
   * then f without the multiplier terms, and the integrator solves for q'' and
   * the multipliers together (constraints.ts).
   */
  readonly constraints?: readonly ConstraintSpec[];
  /** Named quantities evaluated at every output point (outputs.ts). */
  readonly outputs?: readonly OutputSpec[];
}

export interface SystemParameter {
  readonly name: string;
  /** Absent when the parameter is symbolic: a simulation must then supply a value. */
  readonly value?: number;
  readonly unit?: string;
}

export interface SpecializedEvaluators {
  readonly massForcing: MassForcingEvaluator;
  readonly energy?: EnergyEvaluator;
  /**
   * The WebAssembly module behind `massForcing`, when it has one: write
   * [q, q', t, u] into `input`, call `run()`, read M (row-major) and then f
   * from `output`. The same numbers as `massForcing`, without its copies.
   */
  readonly massForcingKernel?: MassForcingKernel;
  /**
   * A DOP853 step kernel (dop853-wasm.ts) generated from the same expressions,
   * for one run's exclusive use until it calls `release`; null where the system
   * keeps the JavaScript path. Modules are compiled once and their instances
   * reused (a reused instance's code is already optimized, a new one starts
   * cold): one module per system reading the parameters from its memory, and,
   * once the same values have run a few times in a row (a worker repeating a
   * run, a benchmark), one with these values folded in.
   */
  readonly acquireStepKernel?: () => { kernel: Dop853Kernel; release: () => void } | null;
}

export interface MassForcingKernel {
  readonly input: Float64Array;
  readonly output: Float64Array;
  readonly run: () => void;
}

export type MassForcingEvaluator = (values: Float64Array, out: Float64Array) => void;
export type EnergyEvaluator = (values: Float64Array) => number;

/** Released step kernels kept for reuse per module (runs at once in one thread are few). */
const MAX_FREE_STEP_KERNELS = 4;
/** From this many runs in a row with the same parameter values on, they get a module with the values folded in. */
const FOLDED_AFTER_USES = 3;

/** One step-kernel module, compiled on first use, and its released instances. */
class StepKernelPool {
  private factory: (() => Dop853Kernel) | null | undefined;
  private readonly free: Dop853Kernel[] = [];

  constructor(private readonly source: StepKernelSource) {}

  acquire(): { kernel: Dop853Kernel; release: () => void } | null {
    let kernel = this.free.pop();
    if (kernel === undefined) {
      if (this.factory === undefined) this.factory = stepKernelFactory(this.source);
      if (this.factory === null) return null;
      kernel = this.factory();
    }
    const acquired = kernel;
    let released = false;
    return {
      kernel: acquired,
      release: () => {
        if (released) return;
        released = true;
        if (this.free.length < MAX_FREE_STEP_KERNELS) this.free.push(acquired);
      },
    };
  }
}

/** The variable names of the packed layout, in order: `q…`, `q'…`, `t`, inputs, parameters. */
export function variableNames(system: Pick<MechanicalSystem, "coordinateNames" | "inputNames" | "parameters">): string[] {
  return [...system.coordinateNames, ...system.coordinateNames.map((name) => `${name}'`), "t", ...system.inputNames, ...system.parameters.map((p) => p.name)];
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
 * What the integrator needs of compiled expressions: writes the value of
 * expression i into `out[i]`, reading the variables from `values` in the order
 * they were given at compile time (the engine's CompiledExpressions has it).
 */
export type ExpressionEvaluator = Pick<CompiledExpressions, "evaluate">;

/**
 * Compiles expressions (trees, or text parsed once) over named variables,
 * with optional named constants folded in; the default is lib/mechanics/compile.ts.
 */
export type ExpressionCompiler = (expressions: ExpressionSource[], variables: string[], constants?: Readonly<Record<string, number>>) => ExpressionEvaluator;

const defaultCompiler: ExpressionCompiler = (expressions, variables, constants) => compileExpressions(expressions, variables, { constants });

/** The mass-matrix form of a derivation: trees from deriveModel, or expression text (a worker message, a stored result). */
export interface MassMatrixForm {
  coordinates: readonly string[];
  inputs?: readonly string[];
  parameters: readonly SystemParameter[];
  /** n rows of n expressions. */
  massMatrix: readonly (readonly ExpressionSource[])[];
  /** n expressions. */
  forcing: readonly ExpressionSource[];
  /** The energy function h = Σ q'·∂L/∂q' − L, when known. */
  energy?: ExpressionSource | null;
  energyConserved?: boolean;
  /** Position and rate constraints, definitions written out. */
  constraints?: readonly ConstraintSpec[];
  /** Quantities evaluated along every run. */
  outputs?: readonly OutputSpec[];
}

/**
 * Builds a `MechanicalSystem` from the derivation's expressions. They are
 * compiled once (text parsed first, never evaluated as program text); the
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
  const fields = [...form.massMatrix.flatMap((row, i) => row.map((_, j) => `massMatrix[${i}][${j}]`)), ...form.forcing.map((_, i) => `forcing[${i}]`)];
  const expressions = [...form.massMatrix.flat(), ...form.forcing];
  // A forcing written with the multiplier terms (the engine's f + Aᵀλ) is read with λ = 0:
  // the integrator adds Aᵀλ itself when it solves for the multipliers.
  const multiplierZeros: Record<string, number> = Object.fromEntries((form.constraints ?? []).map((c) => [multiplierSymbol(c), 0]));
  const massForcingCompiled = compileLocated(expressions, fields, variables, compile, multiplierZeros);
  const massForcing: MassForcingEvaluator = (values, out) => massForcingCompiled.evaluate(values, out);
  const energyExpression = form.energy || null;
  const energy = energyExpression === null ? undefined : energyEvaluator(compileLocated([energyExpression], ["energy"], variables, compile));

  // Step kernels reading the whole packed vector, parameters included (written per run).
  const generalSource = (massForcingCompiled as Partial<CompiledExpressions>).kernel?.source;
  const generalKernels = generalSource ? new StepKernelPool({ ...generalSource, n, inputCount: shape.inputNames.length }) : null;
  const parameterSlot = 2 * n + 1 + shape.inputNames.length;

  // Specialized evaluators read the prefix [q, q', t, u] of the packed vector.
  const prefix = variables.slice(0, 2 * n + 1 + shape.inputNames.length);
  let cachedKey = "";
  let cached: SpecializedEvaluators | null = null;
  const specialize = (parameterValues: Readonly<Record<string, number>>): SpecializedEvaluators => {
    const constants: Record<string, number> = { ...multiplierZeros };
    for (const p of form.parameters) {
      const value = parameterValues[p.name];
      if (value === undefined) throw new SimulationSetupError("missing_parameter", `parameters.${p.name}`, `the parameter "${p.name}" has no value`);
      constants[p.name] = value;
    }
    // One-entry cache: repeated runs with the same values (a worker, a benchmark) compile once.
    const key = JSON.stringify(constants);
    if (cached !== null && key === cachedKey) return cached;
    const compiled = compileLocated(expressions, fields, prefix, compile, constants);
    const kernel = (compiled as Partial<CompiledExpressions>).kernel;
    const foldedKernels = kernel ? new StepKernelPool({ ...kernel.source, n, inputCount: shape.inputNames.length }) : null;
    let uses = 0;
    const acquireStepKernel = () => {
      uses += 1;
      if (foldedKernels !== null && uses >= FOLDED_AFTER_USES) {
        const folded = foldedKernels.acquire();
        if (folded !== null) return folded;
      }
      // The system's own module, with these values written into its parameter slots.
      const general = generalKernels?.acquire() ?? null;
      if (general !== null) form.parameters.forEach((p, i) => (general.kernel.variables[parameterSlot + i] = constants[p.name]!));
      return general;
    };
    const specialized: SpecializedEvaluators = {
      massForcing: (values, out) => compiled.evaluate(values, out),
      ...(kernel ? { massForcingKernel: { input: kernel.input, output: kernel.output, run: kernel.run }, acquireStepKernel } : {}),
      energy: energyExpression === null ? undefined : energyEvaluator(compileLocated([energyExpression], ["energy"], prefix, compile, constants)),
    };
    cachedKey = key;
    cached = specialized;
    return specialized;
  };
  const constraints = form.constraints && form.constraints.length > 0 ? form.constraints : undefined;
  return {
    ...shape,
    massForcing,
    energy,
    specialize,
    energyConserved: form.energyConserved,
    ...(constraints ? { constraints } : {}),
    ...(form.outputs && form.outputs.length > 0 ? { outputs: form.outputs } : {}),
  };
}

/**
 * The mass-matrix form of a derived model: coordinates, inputs and parameters
 * (with their values and units) from the model file; M, f, the energy
 * function, the constraints and the outputs (definitions written out) from
 * `deriveModel`. Plain data that crosses a worker boundary.
 *
 * @example massMatrixFormOf(model, deriveModel(model)).constraints // [{ name: "rod", kind: "position", expr: … }]
 */
export function massMatrixFormOf(
  model: Pick<Model, "coordinates" | "parameters" | "inputs">,
  derivation: Pick<DerivationResult, "coordinates" | "massMatrix" | "forcing" | "energy" | "conserved"> &
    Partial<Pick<DerivationResult, "constraints" | "outputs">>,
): MassMatrixForm {
  const constraints = (derivation.constraints ?? []).map(({ name, kind, expr }) => ({ name, kind, expr }));
  const outputs = (derivation.outputs ?? []).map(({ name, expr, unit }) => ({ name, expr, unit }));
  return {
    coordinates: derivation.coordinates,
    inputs: (model.inputs ?? []).map((input) => input.name),
    parameters: model.parameters.map((p) => ({ name: p.name, value: p.value, unit: p.unit })),
    massMatrix: derivation.massMatrix,
    forcing: derivation.forcing,
    energy: derivation.energy,
    energyConserved: derivation.conserved.some((c) => c.name === "energy function"),
    ...(constraints.length > 0 ? { constraints } : {}),
    ...(outputs.length > 0 ? { outputs } : {}),
  };
}

/**
 * The system of a derived model (see `massMatrixFormOf`). This is the path the
 * server takes.
 *
 * @example
 * const system = systemFromDerivation(model, deriveModel(model));
 */
export function systemFromDerivation(
  model: Pick<Model, "coordinates" | "parameters" | "inputs">,
  derivation: Parameters<typeof massMatrixFormOf>[1],
  compile: ExpressionCompiler = defaultCompiler,
): MechanicalSystem {
  return systemFromMassMatrixForm(massMatrixFormOf(model, derivation), compile);
}

/**
 * Compiles a group of expressions; when one of them is refused, the error names
 * the field it came from (`massMatrix[0][1], column 7: unknown symbol "l3"`).
 */
export function compileLocated(
  expressions: ExpressionSource[],
  fields: string[],
  variables: string[],
  compile: ExpressionCompiler = defaultCompiler,
  constants?: Readonly<Record<string, number>>,
): ExpressionEvaluator {
  try {
    return compile(expressions, variables, constants);
  } catch (error) {
    if (!(error instanceof ExpressionError)) throw error;
    // Find which expression is at fault: compile them one by one.
    for (let i = 0; i < expressions.length; i++) {
      try {
        compile([expressions[i]!], variables, constants);
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

function energyEvaluator(compiled: ExpressionEvaluator): EnergyEvaluator {
  const out = new Float64Array(1);
  return (values) => {
    compiled.evaluate(values, out);
    return out[0]!;
  };
}
