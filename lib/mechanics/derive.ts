import { ExpressionError, ModelError } from "./errors";
import type { Expr, SymbolNode } from "./expr/ast";
import { TIME } from "./expr/ast";
import type { Model } from "./model";
import { analyzeModel, type ModelAnalysis } from "./validate-model";
import { solveAccelerations, type AccelerationsResult } from "./accelerations";
import { Algebra, DEFAULT_ALGEBRA_LIMITS } from "./canonical/algebra";
import { partialDerivative, RateUnavailableError, timeDerivative, type Derivation } from "./canonical/calculus";
import * as C from "./canonical/coefficient";
import { displayExpr } from "./canonical/display";
import { orderedTerms, polyToExpr, termMagnitude } from "./canonical/to-expr";
import { bin, sum } from "./expr/build";
import { toCanonical } from "./canonical/from-expr";
import { SymbolSpace } from "./canonical/space";
import type { Poly } from "./canonical/term";
import { multiplierSymbol, type ConstraintResult, type OutputResult } from "./constraints";
import { addMultiplierTerms, canonicalConstraint, checkConstraintRows, closedFormMultipliers, type CanonicalConstraint } from "./constraint-derive";
import { formatDimension, multiplierUnits } from "./units";

export interface DeriveOptions {
  /** Largest number of terms one intermediate sum may hold (default 200 000). */
  maxTerms?: number;
  /** Largest mass matrix inverted symbolically for the Hamiltonian (default 3). */
  hamiltonianMaxSize?: number;
}

/*
 * Results are expression trees (plain JSON objects). Each expression comes in
 * the canonical form, the engine's form for computing and comparing, and the
 * expressions a reader looks at also in display form (canonical/display.ts):
 * collected by accelerations and rates, coefficients factored, sin² where the
 * model had it. Both are the same value. Print them where they leave: text
 * with formatExpression, LaTeX with toLatex.
 */

export interface EquationResult {
  coordinate: string;
  /** d/dt(∂L/∂q') − ∂L/∂q + ∂D/∂q' − Q_q, canonical. */
  residual: Expr;
  /** The residual in display form. */
  display: Expr;
}

export interface MomentumResult {
  coordinate: string;
  expr: Expr;
}

export interface ConservedQuantity {
  name: string;
  expr: Expr;
  /** `expr` in display form. */
  display: Expr;
  reason: string;
}

/**
 * A cyclic coordinate (L does not depend on it) and the balance of its
 * momentum p = ∂L/∂q': dp/dt = Q − ∂D/∂q', the applied generalized force on
 * it minus the dissipation acting on it. Conserved when both are absent.
 */
export interface CyclicMomentum {
  coordinate: string;
  momentum: Expr;
  conserved: boolean;
  /** dp/dt; the number 0 when conserved. */
  rate: Expr;
  /** `momentum` and `rate` in display form. */
  display: { momentum: Expr; rate: Expr };
  /** What acts on the coordinate: an applied force (the model's forces entry), the dissipation function, both, or neither. */
  actedOnBy: ("applied force" | "dissipation" | "constraint")[];
}

export type HamiltonianResult = { available: true; expr: Expr; momenta: { coordinate: string; symbol: string }[] } | { available: false; reason: string };

export interface DerivationTiming {
  canonicalMs: number;
  equationsMs: number;
  analysisMs: number;
  totalMs: number;
}

export interface DerivationResult {
  coordinates: string[];
  equations: EquationResult[];
  /** M[i][j] = ∂residual_i/∂q_j''; symmetric. */
  massMatrix: Expr[][];
  /** f with residual = M q'' − f. */
  forcing: Expr[];
  /** The energy function h = Σ q'·∂L/∂q' − L. */
  energy: Expr;
  /** M, f and h in display form. */
  display: { massMatrix: Expr[][]; forcing: Expr[]; energy: Expr };
  momenta: MomentumResult[];
  /** Coordinates L does not depend on. */
  cyclic: string[];
  /** The momentum balance of each cyclic coordinate, in the order of `cyclic`. */
  cyclicMomenta: CyclicMomentum[];
  /**
   * Coordinates that neither M nor f contains (only their rates and
   * accelerations appear): the equations do not fix their value, so every
   * equilibrium is one of a continuum along them.
   */
  freeCoordinates: string[];
  conserved: ConservedQuantity[];
  /** L depends on t explicitly. */
  explicitTime: boolean;
  hamiltonian: HamiltonianResult;
  /** q'' solved from M q'' = f where the engine gives a closed form, or why not (see accelerations.ts). With constraints, in terms of the multipliers. */
  accelerations: AccelerationsResult;
  /** Position constraints, then rate constraints, with their multipliers (see constraints.ts); empty without constraints. */
  constraints: ConstraintResult[];
  /** The model's outputs, definitions expanded; empty without outputs. */
  outputs: OutputResult[];
  timing: DerivationTiming;
}

/** The canonical sums behind a derivation, for callers that keep computing (linearization, code export). */
export interface CanonicalDerivation {
  space: SymbolSpace;
  algebra: Algebra;
  kinetic: Poly;
  potential: Poly;
  dissipation: Poly;
  forces: Poly[];
  lagrangian: Poly;
  momenta: Poly[];
  residuals: Poly[];
  massMatrix: Poly[][];
  forcing: Poly[];
  energy: Poly;
  cyclic: boolean[];
  explicitTime: boolean;
  /** Position constraints, then rate constraints; their multiplier terms are in `residuals` and `forcing`. */
  constraints: CanonicalConstraint[];
  /** f₀: the forcing without the multiplier terms. */
  unconstrainedForcing: Poly[];
  /** The model's outputs, definitions expanded (may contain accelerations and multiplier symbols). */
  outputs: { name: string; unit: string; expr: Poly }[];
  /** Milliseconds spent bringing the model's expressions to canonical form. */
  canonicalMs: number;
}

const now = () => performance.now();

/**
 * Derives the Euler–Lagrange equations of a model and brings them to
 * mass-matrix form, with the energy function, momenta and conserved quantities.
 * Throws ModelError for a model that is not valid.
 *
 * @example
 * const result = deriveModel(model);
 * formatExpression(result.equations[0].residual) // "m*l^2*theta'' + m*g*l*sin(theta)"
 */
export function deriveModel(model: Model, options: DeriveOptions = {}): DerivationResult {
  const start = now();
  const canonical = deriveCanonical(model, options);
  const afterEquations = now();
  const { space, algebra: alg } = canonical;
  const names = model.coordinates.map((c) => c.name);
  const tree = (p: Poly) => polyToExpr(space, p);
  const display = (p: Poly) => displayExpr(alg, p);

  const conserved: ConservedQuantity[] = [];
  const noForces = canonical.forces.every((q) => q.size === 0);
  const noDissipation = canonical.dissipation.size === 0;
  // Ideal constraints that do not move in time do no work.
  const workless = canonical.constraints.every((c) => !c.explicitTime);
  if (!canonical.explicitTime && noForces && noDissipation && workless) {
    conserved.push({
      name: "energy function",
      expr: tree(canonical.energy),
      display: display(canonical.energy),
      reason: "L has no explicit t and there is no dissipation or applied force",
    });
  }
  const cyclicMomenta: CyclicMomentum[] = [];
  names.forEach((name, i) => {
    if (!canonical.cyclic[i]) return;
    // With ∂L/∂q = 0 Lagrange's equation leaves dp/dt = Q − ∂D/∂q'.
    const dissipative = partialDerivative(alg, space.rates[i]!).apply(canonical.dissipation);
    const rate = alg.sub(canonical.forces[i]!, dissipative);
    const actedOnBy: CyclicMomentum["actedOnBy"] = [];
    if (canonical.forces[i]!.size > 0) actedOnBy.push("applied force");
    if (dissipative.size > 0) actedOnBy.push("dissipation");
    const constraintForce: Poly = alg.zero();
    for (const c of canonical.constraints) alg.mulInto(constraintForce, alg.symbol(c.id), c.jacobian[i]!);
    if (constraintForce.size > 0) {
      alg.addInto(rate, constraintForce);
      actedOnBy.push("constraint");
    }
    const momentum = canonical.momenta[i]!;
    const isConserved = rate.size === 0;
    cyclicMomenta.push({
      coordinate: name,
      momentum: tree(momentum),
      conserved: isConserved,
      rate: tree(rate),
      display: { momentum: display(momentum), rate: display(rate) },
      actedOnBy,
    });
    if (isConserved) {
      conserved.push({
        name: `momentum of ${name}`,
        expr: tree(momentum),
        display: display(momentum),
        reason: `${name} is cyclic and no force, dissipation or constraint acts on it`,
      });
    }
  });

  const hamiltonian: HamiltonianResult =
    canonical.constraints.length > 0
      ? { available: false, reason: "the model has constraints; the Hamiltonian is given for unconstrained coordinates only" }
      : legendreTransform(canonical, names, options.hamiltonianMaxSize ?? 3, model);
  const constraints = constraintResults(canonical, model);
  const accelerations = solveAccelerations(alg, names, canonical.massMatrix, canonical.forcing);
  const mentions = [...canonical.massMatrix.flat(), ...canonical.forcing];
  const freeCoordinates = names.filter((_, i) => !mentions.some((p) => alg.dependsOn(p, space.coordinates[i]!)));
  const result: DerivationResult = {
    coordinates: names,
    equations: canonical.residuals.map((r, i) => ({ coordinate: names[i]!, residual: tree(r), display: display(r) })),
    massMatrix: canonical.massMatrix.map((row) => row.map(tree)),
    forcing: canonical.forcing.map(tree),
    energy: tree(canonical.energy),
    display: { massMatrix: canonical.massMatrix.map((row) => row.map(display)), forcing: canonical.forcing.map(display), energy: display(canonical.energy) },
    momenta: canonical.momenta.map((p, i) => ({ coordinate: names[i]!, expr: tree(p) })),
    cyclic: names.filter((_, i) => canonical.cyclic[i]),
    cyclicMomenta,
    freeCoordinates,
    conserved,
    explicitTime: canonical.explicitTime,
    hamiltonian,
    accelerations,
    constraints,
    outputs: canonical.outputs.map((o) => ({ name: o.name, expr: tree(o.expr), display: display(o.expr), unit: o.unit })),
    timing: {
      canonicalMs: canonical.canonicalMs,
      equationsMs: afterEquations - start - canonical.canonicalMs,
      analysisMs: 0,
      totalMs: 0,
    },
  };
  const end = now();
  result.timing.analysisMs = end - afterEquations;
  result.timing.totalMs = end - start;
  return result;
}

/** Multipliers in closed form where small enough, after checking that the constraints are independent. */
function constraintResults(canonical: CanonicalDerivation, model: Model): ConstraintResult[] {
  const { space, algebra: alg } = canonical;
  if (canonical.constraints.length === 0) return [];
  const parameterValues = new Map<number, number>();
  for (const p of model.parameters) {
    const id = space.lookup(p.name, "parameter");
    if (id !== undefined && p.value !== undefined) parameterValues.set(id, p.value);
  }
  checkConstraintRows(alg, canonical.constraints, parameterValues);
  const solved = closedFormMultipliers(alg, canonical.massMatrix, canonical.unconstrainedForcing, canonical.constraints);
  let units: Record<string, string> = {};
  try {
    units = Object.fromEntries(Object.entries(multiplierUnits(model)).map(([symbol, d]) => [symbol, formatDimension(d)]));
  } catch {
    // Unit problems are reported by checkModelUnits; the unit is left blank here.
  }
  return canonical.constraints.map((c, k) => {
    const closed = solved[k]!;
    const base = {
      name: c.name,
      kind: c.kind,
      symbol: c.symbol,
      expr: polyToExpr(space, c.expr),
      jacobian: c.jacobian.map((a) => polyToExpr(space, a)),
      bias: polyToExpr(space, c.bias),
      unit: units[c.symbol] ?? "",
    };
    return closed.multiplier === null
      ? { ...base, multiplier: null, display: null, reason: closed.reason }
      : { ...base, multiplier: closed.multiplier, display: closed.display };
  });
}

/** The Euler–Lagrange equations as canonical sums. See deriveModel. */
export function deriveCanonical(model: Model, options: DeriveOptions = {}): CanonicalDerivation {
  const start = now();
  const analysis = analyzeModel(model);
  const space = new SymbolSpace();
  const alg = new Algebra(space, { ...DEFAULT_ALGEBRA_LIMITS, ...(options.maxTerms ? { maxTerms: options.maxTerms } : {}) });
  const parameters = new Map<string, number>();
  for (const p of model.parameters) parameters.set(p.name, space.addParameter(p.name));
  for (const u of model.inputs ?? []) parameters.set(u.name, space.addInput(u.name));
  const coordinates = new Map<string, number>();
  model.coordinates.forEach((c, i) => {
    space.addCoordinate(c.name);
    coordinates.set(c.name, i);
  });
  const dt = timeDerivative(alg);
  const definitions = canonicalDefinitions(analysis, alg, dt, parameters, coordinates);
  const resolve = makeResolver(alg, dt, parameters, coordinates, definitions);
  const canonicalOf = (tree: Expr | null | undefined, field: string) => (tree ? convert(alg, tree, field, resolve) : alg.zero());

  const kinetic = canonicalOf(analysis.kinetic, "kinetic");
  const potential = canonicalOf(analysis.potential, "potential");
  const dissipation = canonicalOf(analysis.dissipation, "dissipation");
  const forces = model.coordinates.map((c) => canonicalOf(analysis.forces.get(c.name), `forces.${c.name}`));
  const constraintSpecs = [
    ...(model.constraints ?? []).map((c, i) => ({ name: c.name, kind: "position" as const, field: `constraints[${i}].expr`, tree: analysis.constraints[i]! })),
    ...(model.rateConstraints ?? []).map((c, i) => ({
      name: c.name,
      kind: "rate" as const,
      field: `rateConstraints[${i}].expr`,
      tree: analysis.rateConstraints[i]!,
    })),
  ];
  const constraintPolys = constraintSpecs.map((c) => canonicalOf(c.tree, c.field));
  // Multipliers are unknown functions of time, like inputs; only outputs may name them.
  const multipliers = new Map<string, number>();
  const constraintIds = constraintSpecs.map((c) => {
    const symbol = multiplierSymbol(c.kind, c.name);
    const id = space.addInput(symbol);
    multipliers.set(symbol, id);
    return { symbol, id };
  });
  const outputResolve = makeResolver(alg, dt, new Map([...parameters, ...multipliers]), coordinates, definitions);
  const outputs = (model.outputs ?? []).map((o, i) => ({
    name: o.name,
    unit: o.unit,
    expr: convert(alg, analysis.outputs[i]!, `outputs[${i}].expr`, outputResolve),
  }));
  const canonicalMs = now() - start;

  const lagrangian = alg.sub(kinetic, potential);
  const n = model.coordinates.length;
  const momenta: Poly[] = [];
  const residuals: Poly[] = [];
  for (let i = 0; i < n; i++) {
    const p = partialDerivative(alg, space.rates[i]!).apply(lagrangian);
    momenta.push(p);
    let dpdt: Poly;
    try {
      dpdt = dt.apply(p);
    } catch (error) {
      if (error instanceof RateUnavailableError) {
        throw new ModelError(
          "unsupported",
          "kinetic",
          `the Euler–Lagrange equation of ${model.coordinates[i]!.name} needs the rate of ${error.what}, which the model does not define`,
        );
      }
      throw error;
    }
    const residual = alg.sub(dpdt, partialDerivative(alg, space.coordinates[i]!).apply(lagrangian));
    alg.addInto(residual, partialDerivative(alg, space.rates[i]!).apply(dissipation));
    alg.addInto(residual, forces[i]!, C.MINUS_ONE);
    residuals.push(residual);
  }

  const constraints = constraintSpecs.map((c, k) =>
    canonicalConstraint(alg, dt, { name: c.name, kind: c.kind, field: c.field, ...constraintIds[k]! }, constraintPolys[k]!),
  );

  // Mass-matrix form: residual = Σ_j M_ij q_j'' − f_i.
  const massMatrix: Poly[][] = residuals.map((r, i) =>
    space.accelerations.map((a) => {
      const entry = partialDerivative(alg, a).apply(r);
      for (const b of space.accelerations) {
        if (alg.dependsOn(entry, b)) {
          throw new ModelError("unsupported", `forces.${model.coordinates[i]!.name}`, "the equations are not linear in the accelerations");
        }
      }
      return entry;
    }),
  );
  const forcingOf = (r: Poly) => {
    const f: Poly = alg.zero();
    for (const t of r.values()) {
      let hasAcceleration = false;
      for (let k = 0; k < t.f.length; k += 2) if (space.kind(t.f[k]!) === "acceleration") hasAcceleration = true;
      if (!hasAcceleration) alg.accumulate(f, C.negate(t.c), t.f, t.g);
    }
    return f;
  };
  const unconstrainedForcing = residuals.map(forcingOf);
  // The residual of q gains −Σ λ_k ∂g_k/∂q and −Σ μ_k a_kq; the forcing carries +λ_k ∂g_k/∂q.
  addMultiplierTerms(alg, residuals, constraints);
  const forcing = constraints.length === 0 ? unconstrainedForcing : residuals.map(forcingOf);

  const energy = alg.negate(lagrangian);
  for (let i = 0; i < n; i++) alg.mulInto(energy, alg.symbol(space.rates[i]!), momenta[i]!);
  const cyclic = space.coordinates.map((q) => !alg.dependsOn(lagrangian, q));
  const explicitTime = alg.dependsOn(lagrangian, space.time);
  return {
    space,
    algebra: alg,
    kinetic,
    potential,
    dissipation,
    forces,
    lagrangian,
    momenta,
    residuals,
    massMatrix,
    forcing,
    energy,
    cyclic,
    explicitTime,
    constraints,
    unconstrainedForcing,
    outputs,
    canonicalMs,
  };
}

function convert(alg: Algebra, tree: Expr, field: string, resolve: (node: SymbolNode) => Poly): Poly {
  return ModelError.inField(field, () => toCanonical(alg, tree, resolve));
}

/** Each definition's value, rate and acceleration, computed on demand in dependency order. */
type DefinitionTable = Map<string, { values: (Poly | undefined)[] }>;

function canonicalDefinitions(
  analysis: ModelAnalysis,
  alg: Algebra,
  dt: Derivation,
  parameters: Map<string, number>,
  coordinates: Map<string, number>,
): DefinitionTable {
  const table: DefinitionTable = new Map();
  const definitions = analysis.model.definitions ?? [];
  for (const i of analysis.definitionOrder) {
    const field = `definitions[${i}].expr`;
    const base = convert(alg, analysis.definitions[i]!, field, makeResolver(alg, dt, parameters, coordinates, table));
    table.set(definitions[i]!.name, { values: [base] });
  }
  return table;
}

function makeResolver(
  alg: Algebra,
  dt: Derivation,
  parameters: Map<string, number>,
  coordinates: Map<string, number>,
  definitions: DefinitionTable,
): (node: SymbolNode) => Poly {
  const space = alg.space;
  return (node) => {
    if (node.name === TIME) return alg.symbol(space.time);
    const parameter = parameters.get(node.name);
    if (parameter !== undefined) return alg.symbol(parameter);
    const coordinate = coordinates.get(node.name);
    if (coordinate !== undefined) {
      const ids = [space.coordinates, space.rates, space.accelerations][node.order]!;
      return alg.symbol(ids[coordinate]!);
    }
    const definition = definitions.get(node.name);
    if (definition === undefined) throw new ExpressionError("unknown_symbol", `unknown symbol "${node.name}"`, node.start, node.end - node.start);
    for (let k = 1; k <= node.order; k++) {
      if (definition.values[k] !== undefined) continue;
      try {
        definition.values[k] = dt.apply(definition.values[k - 1]!);
      } catch (error) {
        if (error instanceof RateUnavailableError) {
          throw new ExpressionError(
            "unsupported",
            `${node.name}${"'".repeat(node.order)} needs the rate of ${error.what}, which the model does not define`,
            node.start,
            node.end - node.start,
          );
        }
        throw error;
      }
    }
    return definition.values[node.order]!;
  };
}

/**
 * H(q, p) = ½ (p − b)ᵀ M⁻¹ (p − b) − L₀ for L = ½ q'ᵀ M q' + bᵀ q' + L₀,
 * with M⁻¹ = adj(M)/det(M) written out symbolically for small M.
 */
function legendreTransform(c: CanonicalDerivation, names: string[], maxSize: number, model: Model): HamiltonianResult {
  const { space, algebra: alg } = c;
  const n = names.length;
  if (n > maxSize) return { available: false, reason: `the mass matrix is ${n}×${n}; it is inverted symbolically only up to ${maxSize}×${maxSize}` };
  const rates = new Set(space.rates);
  for (const t of c.lagrangian.values()) {
    let degree = 0;
    for (let k = 0; k < t.f.length; k += 2) {
      if (rates.has(t.f[k]!)) {
        const e = t.f[k + 1]!;
        if (!Number.isInteger(e) || e < 0) return { available: false, reason: "L is not polynomial in the rates" };
        degree += e;
      } else if (rates.size > 0) {
        for (const r of rates) {
          if (space.entry(t.f[k]!).dependsOn.has(r) && space.kind(t.f[k]!) !== "rate") return { available: false, reason: "L is not polynomial in the rates" };
        }
      }
    }
    if (degree > 2) return { available: false, reason: "L is not quadratic in the rates" };
  }
  const hessian = c.momenta.map((p) => space.rates.map((r) => partialDerivative(alg, r).apply(p)));
  const zeroRates = (p: Poly): Poly => {
    const out: Poly = alg.zero();
    for (const t of p.values()) {
      let hasRate = false;
      for (let k = 0; k < t.f.length; k += 2) if (rates.has(t.f[k]!)) hasRate = true;
      if (!hasRate) alg.accumulate(out, t.c, t.f, t.g);
    }
    return out;
  };
  const taken = new Set<string>([...model.coordinates, ...model.parameters, ...(model.inputs ?? []), ...(model.definitions ?? [])].map((s) => s.name));
  const momentumSymbols = names.map((name, i) => {
    let symbol = `p_${name}`;
    while (taken.has(symbol)) symbol += "_";
    taken.add(symbol);
    const existing = space.momenta[i];
    return { symbol, id: existing ?? space.addMomentum(symbol, i) };
  });
  const w = c.momenta.map((p, i) => alg.sub(alg.symbol(momentumSymbols[i]!.id), zeroRates(p)));
  const det = determinant(alg, hessian);
  if (det.size === 0) return { available: false, reason: "the mass matrix is singular" };
  const adj = adjugate(alg, hessian);
  const quadratic: Poly = alg.zero();
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) alg.mulInto(quadratic, alg.mul(w[i]!, adj[i]![j]!), w[j]!);
  const rest = alg.negate(zeroRates(c.lagrangian));
  const momenta = names.map((coordinate, i) => ({ coordinate, symbol: momentumSymbols[i]!.symbol }));
  const single = det.size === 1 ? det.values().next().value! : null;
  if (single && single.g === null) {
    const h = alg.mul(quadratic, alg.fromTerm(alg.termPower(single, -1)));
    const total = alg.add(alg.scale(h, C.HALF), rest);
    return { available: true, expr: polyToExpr(space, total), momenta };
  }
  const fraction = bin("/", polyToExpr(space, quadratic), polyToExpr(space, alg.scale(det, C.rational(2))));
  const restTerms = orderedTerms(space, rest).map((t) => ({ negative: C.toNumber(t.c) < 0, term: termMagnitude(space, t) }));
  return { available: true, expr: sum([{ negative: false, term: fraction }, ...restTerms]), momenta };
}

function minor(m: Poly[][], row: number, col: number): Poly[][] {
  return m.filter((_, i) => i !== row).map((r) => r.filter((_, j) => j !== col));
}

export function determinant(alg: Algebra, m: Poly[][]): Poly {
  const n = m.length;
  if (n === 1) return m[0]![0]!;
  const out: Poly = alg.zero();
  for (let j = 0; j < n; j++) {
    if (m[0]![j]!.size === 0) continue;
    alg.mulInto(out, m[0]![j]!, determinant(alg, minor(m, 0, j)), j % 2 === 0 ? C.ONE : C.MINUS_ONE);
  }
  return out;
}

/** adj(M)[i][j] = (−1)^(i+j) det(minor(M, j, i)). */
export function adjugate(alg: Algebra, m: Poly[][]): Poly[][] {
  const n = m.length;
  if (n === 1) return [[alg.constant(C.ONE)]];
  return m.map((_, i) =>
    m.map((__, j) => {
      const d = determinant(alg, minor(m, j, i));
      return (i + j) % 2 === 0 ? d : alg.negate(d);
    }),
  );
}
