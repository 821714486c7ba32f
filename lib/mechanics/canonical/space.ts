import type { FunctionName } from "../expr/ast";
import type { Poly, Term } from "./term";

/**
 * The symbol table of one derivation. Every factor of a canonical term refers
 * to a symbol by a small integer id; the same table holds the "atoms" that let
 * expressions outside the trigonometric-polynomial class (sqrt, 1/(a+b), exp,
 * sin of a non-linear argument) ride along as opaque factors, each with a
 * canonical argument, so equal atoms share one id.
 */
export type SymbolKind =
  | "pi"
  | "one"
  | "time"
  | "parameter"
  | "input"
  | "coordinate"
  | "rate"
  | "acceleration"
  | "momentum"
  /** A constant-rate phase `monomial * t` (e.g. omega*t) usable inside sin/cos. */
  | "phase"
  /** F(arg) for a whitelisted function F, the argument a canonical polynomial. */
  | "function"
  /** base^r for a canonical polynomial base that is not a single plain term. */
  | "power";

export interface SymbolEntry {
  readonly id: number;
  readonly kind: SymbolKind;
  /** The name as written in the input (`theta1`); for atoms a generated label. */
  readonly name: string;
  /** Index of the coordinate for coordinate/rate/acceleration/momentum, else -1. */
  readonly coordinate: number;
  /** Plain symbols this one depends on (itself for plain symbols). */
  readonly dependsOn: ReadonlySet<number>;
  readonly fn?: FunctionName;
  readonly arg?: Poly;
  readonly base?: Poly;
  /** For a phase: the constant monomial multiplying t, as a term with coefficient 1. */
  readonly phase?: Term;
}

/** Order in which factor kinds are printed inside a term. */
const PRINT_RANK: Record<SymbolKind, number> = {
  pi: 0,
  one: 0,
  parameter: 1,
  input: 2,
  time: 3,
  phase: 3,
  coordinate: 4,
  function: 5,
  power: 5,
  momentum: 6,
  rate: 7,
  acceleration: 8,
};

/** Order in which members of an angle combination are printed (coordinates first). */
const ANGLE_RANK: Partial<Record<SymbolKind, number>> = { coordinate: 0, parameter: 1, phase: 2, pi: 3, one: 4 };

export class SymbolSpace {
  readonly entries: SymbolEntry[] = [];
  private readonly byName = new Map<string, number>();
  private readonly atoms = new Map<string, number>();
  /** True once a power atom exists; multiplication only then checks for exponents that became integral. */
  hasPowerAtoms = false;
  readonly pi: number;
  readonly one: number;
  readonly time: number;
  readonly coordinates: number[] = [];
  readonly rates: number[] = [];
  readonly accelerations: number[] = [];
  readonly momenta: number[] = [];

  constructor() {
    this.pi = this.add("pi", "pi", -1);
    this.one = this.add("one", "1", -1);
    this.time = this.add("time", "t", -1);
  }

  private add(kind: SymbolKind, name: string, coordinate: number, extra: Partial<SymbolEntry> = {}, dependsOn?: Set<number>): number {
    const id = this.entries.length;
    this.entries.push({ id, kind, name, coordinate, dependsOn: dependsOn ?? new Set([id]), ...extra });
    if (kind !== "function" && kind !== "power" && kind !== "phase" && kind !== "one") this.byName.set(name + kindSuffix(kind), id);
    return id;
  }

  addParameter(name: string): number {
    return this.add("parameter", name, -1);
  }

  addInput(name: string): number {
    return this.add("input", name, -1);
  }

  /** Registers q, q' and q'' for one coordinate; returns the id of q. */
  addCoordinate(name: string): number {
    const index = this.coordinates.length;
    const q = this.add("coordinate", name, index);
    this.coordinates.push(q);
    this.rates.push(this.add("rate", name, index));
    this.accelerations.push(this.add("acceleration", name, index));
    return q;
  }

  /** Registers a conjugate momentum symbol printed as `name`. */
  addMomentum(name: string, coordinate: number): number {
    const id = this.add("momentum", name, coordinate);
    this.momenta[coordinate] = id;
    return id;
  }

  lookup(name: string, kind: SymbolKind): number | undefined {
    return this.byName.get(name + kindSuffix(kind));
  }

  entry(id: number): SymbolEntry {
    return this.entries[id]!;
  }

  kind(id: number): SymbolKind {
    return this.entries[id]!.kind;
  }

  printRank(id: number): number {
    return PRINT_RANK[this.entries[id]!.kind] * 1e6 + id;
  }

  /** Sort key inside an angle combination; undefined for symbols that cannot be angles. */
  angleRank(id: number): number | undefined {
    const rank = ANGLE_RANK[this.entries[id]!.kind];
    return rank === undefined ? undefined : rank * 1e6 + id;
  }

  isConstant(id: number): boolean {
    const kind = this.entries[id]!.kind;
    return kind === "parameter" || kind === "pi" || kind === "one";
  }

  /** The atom F(arg) with a canonical argument key. */
  functionAtom(fn: FunctionName, arg: Poly, argKey: string, dependsOn: Set<number>): number {
    const key = `${fn}(${argKey})`;
    const found = this.atoms.get(key);
    if (found !== undefined) return found;
    const id = this.add("function", `${fn}#${this.entries.length}`, -1, { fn, arg }, dependsOn);
    this.atoms.set(key, id);
    return id;
  }

  /** The atom base^(...) for a canonical base. */
  powerAtom(base: Poly, baseKey: string, dependsOn: Set<number>): number {
    const key = `pow(${baseKey})`;
    const found = this.atoms.get(key);
    if (found !== undefined) return found;
    const id = this.add("power", `pow#${this.entries.length}`, -1, { base }, dependsOn);
    this.atoms.set(key, id);
    this.hasPowerAtoms = true;
    return id;
  }

  /** The phase monomial*t, keyed by the monomial's factors. */
  phaseAtom(monomial: Term): number {
    const key = `phase(${monomial.key})`;
    const found = this.atoms.get(key);
    if (found !== undefined) return found;
    const dependsOn = new Set<number>([this.time]);
    for (let i = 0; i < monomial.f.length; i += 2) dependsOn.add(monomial.f[i]!);
    const id = this.add("phase", `phase#${this.entries.length}`, -1, { phase: monomial }, dependsOn);
    this.atoms.set(key, id);
    return id;
  }
}

function kindSuffix(kind: SymbolKind): string {
  switch (kind) {
    case "rate":
      return "'";
    case "acceleration":
      return "''";
    case "momentum":
      return "#p";
    default:
      return "";
  }
}
