import type { CodeLanguage } from "./codegen";
import type { MassMatrixSystem } from "./compile";
import type { Complex, Linearization, OperatingPoint } from "./linearize";

/**
 * Frequency-domain view of a linearization: ẋ = A x + B u, y = C x + D u.
 * Framework-free numerics; the notebook's linearization cell plots what
 * these return.
 */

export interface StateSpace {
  /** State names, x = [q; q']. */
  state: string[];
  inputs: string[];
  outputs: string[];
  /** n×n. */
  A: number[][];
  /** n×m. */
  B: number[][];
  /** p×n. */
  C: number[][];
  /** p×m. */
  D: number[][];
}

/** An output chosen for y = C x + D u: an expression in q, q', q'', t and inputs (parameters folded in). */
export interface OutputChoice {
  name: string;
  expr: string;
}

export interface PoleInfo {
  pole: Complex;
  /** |p| in rad/s. */
  naturalFrequency: number;
  /** −Re p / |p|; 1 for a real stable pole, negative for an unstable one; null at p = 0. */
  dampingRatio: number | null;
}

export type ZerosResult = { available: true; zeros: Complex[] } | { available: false; reason: string };

export interface FrequencyResponseOptions {
  /** Input index or name. */
  input: number | string;
  /** Output index or name. */
  output: number | string;
  /** Frequencies in rad/s; otherwise `points` log-spaced between `from` and `to` (defaults from the poles). */
  frequencies?: readonly number[];
  from?: number;
  to?: number;
  points?: number;
}

export interface FrequencyResponse {
  input: string;
  output: string;
  /** rad/s, increasing. */
  frequencies: number[];
  /** 20·log10|H(jω)|; −Infinity where H is exactly zero. */
  magnitudeDb: number[];
  /** arg H(jω) in degrees, unwrapped along the frequencies. */
  phaseDeg: number[];
  poles: PoleInfo[];
  /** Transmission zeros of this input–output pair. */
  zeros: ZerosResult;
}

/** Export formats of the state-space matrices: JSON, CSV, or code in an export language. */
export type StateSpaceFormat = "json" | "csv" | CodeLanguage;

/**
 * C and D of chosen outputs about an operating point, from exact derivatives:
 * C = ∂y/∂x + ∂y/∂q''·A₂, D = ∂y/∂u + ∂y/∂q''·B₂, where A₂, B₂ are the
 * acceleration rows of the linearization (outputs may use accelerations).
 *
 * @example stateSpaceOf(system, lin, point, [{ name: "x", expr: "x" }]).C // [[1, 0]]
 */
export function stateSpaceOf(system: MassMatrixSystem, linearization: Linearization, point: OperatingPoint, outputs: readonly OutputChoice[]): StateSpace {
  void system;
  void linearization;
  void point;
  void outputs;
  throw new Error("stateSpaceOf: not available yet");
}

/** Poles (eigenvalues of A) with natural frequency and damping ratio, sorted by natural frequency. */
export function polesOf(A: readonly (readonly number[])[]): PoleInfo[] {
  void A;
  throw new Error("polesOf: not available yet");
}

/** Transmission zeros of one input–output pair (SISO), where defined. */
export function transmissionZeros(ss: StateSpace, input: number | string, output: number | string): ZerosResult {
  void ss;
  void input;
  void output;
  throw new Error("transmissionZeros: not available yet");
}

/**
 * Bode data from one input to one output: H(jω) = C (jωI − A)⁻¹ B + D.
 *
 * @example frequencyResponse(ss, { input: 0, output: 0, from: 0.1, to: 100, points: 200 }).magnitudeDb
 */
export function frequencyResponse(ss: StateSpace, options: FrequencyResponseOptions): FrequencyResponse {
  void ss;
  void options;
  throw new Error("frequencyResponse: not available yet");
}

/** The state-space matrices as JSON, CSV (one block per matrix) or code in an export language. */
export function exportStateSpace(ss: StateSpace, format: StateSpaceFormat): string {
  void ss;
  void format;
  throw new Error("exportStateSpace: not available yet");
}
