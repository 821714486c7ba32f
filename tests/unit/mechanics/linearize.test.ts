import { EigenvalueDecomposition, Matrix } from "ml-matrix";
import { describe, expect, it } from "vitest";
import { compileMassMatrixSystem, type MassMatrixSystem } from "@/lib/mechanics/compile";
import { ModelError } from "@/lib/mechanics/errors";
import { linearizeAbout, type AnalysisSystem } from "@/lib/mechanics/linearize";
import { seededRandom } from "./helpers/random-expr";

// Double pendulum, point masses on massless rods: J. R. Taylor, Classical Mechanics (2005), ch. 11 (from memory; REFERENCES.md).
const doublePendulum = (parameters: Record<string, number>): MassMatrixSystem => ({
  coordinates: ["theta1", "theta2"],
  coordinateUnits: ["rad", "rad"],
  massMatrix: [
    ["(m1 + m2)*l1^2", "m2*l1*l2*cos(theta1 - theta2)"],
    ["m2*l1*l2*cos(theta1 - theta2)", "m2*l2^2"],
  ],
  forcing: ["-m2*l1*l2*theta2'^2*sin(theta1 - theta2) - (m1 + m2)*g*l1*sin(theta1)", "m2*l1*l2*theta1'^2*sin(theta1 - theta2) - m2*g*l2*sin(theta2)"],
  parameters,
});

describe("linearizeAbout", () => {
  it("double pendulum, m1 = m2, l1 = l2: ω² = (2 ± √2) g/l", () => {
    const g = 9.81;
    const l = 0.7;
    const lin = linearizeAbout(doublePendulum({ m1: 2, m2: 2, l1: l, l2: l, g }), { q: [0, 0] });
    // Small-oscillation frequencies ω² = (2 ∓ √2) g/l — Taylor, Classical Mechanics, ch. 11 (from memory; REFERENCES.md).
    expect(lin.modes[0]!.omegaSquared).toBeCloseTo(((2 - Math.SQRT2) * g) / l, 10);
    expect(lin.modes[1]!.omegaSquared).toBeCloseTo(((2 + Math.SQRT2) * g) / l, 10);
    expect(lin.modes[0]!.hertz).toBeCloseTo(Math.sqrt(((2 - Math.SQRT2) * g) / l) / (2 * Math.PI), 10);
    // Mode shapes θ2/θ1 = +√2 (slow) and −√2 (fast) — same source (from memory), re-derived from det(K − ω²M) = 0.
    expect(lin.modes[0]!.shape[0]).toBeCloseTo(Math.SQRT1_2, 10);
    expect(lin.modes[0]!.shape[1]).toBeCloseTo(1, 12);
    expect(lin.modes[1]!.shape[0]).toBeCloseTo(-Math.SQRT1_2, 10);
    expect(lin.modes[1]!.shape[1]).toBeCloseTo(1, 12);
    // Undamped: the eigenvalues of A are ±iω.
    const imaginary = lin.eigenvalues.map((e) => Math.abs(e.im)).sort((a, b) => a - b);
    expect(Math.max(...lin.eigenvalues.map((e) => Math.abs(e.re)))).toBeLessThan(1e-9);
    expect(imaginary[0]).toBeCloseTo(Math.sqrt(((2 - Math.SQRT2) * g) / l), 9);
    expect(imaginary[3]).toBeCloseTo(Math.sqrt(((2 + Math.SQRT2) * g) / l), 9);
  });

  it("two equal masses, three equal springs: ω = √(k/m), √(3k/m), modes (1,1) and (1,−1), and ml-matrix agrees", () => {
    const k = 120;
    const m = 3;
    const system: MassMatrixSystem = {
      coordinates: ["x1", "x2"],
      massMatrix: [
        ["m", "0"],
        ["0", "m"],
      ],
      forcing: ["-k*x1 - k*(x1 - x2)", "-k*x2 - k*(x2 - x1)"],
      parameters: { k, m },
    };
    const lin = linearizeAbout(system, { q: [0, 0] });
    // Standard normal-mode example (from memory; REFERENCES.md): ω1 = √(k/m), ω2 = √(3k/m), modes (1,1), (1,−1).
    expect(lin.modes[0]!.radPerSecond).toBeCloseTo(Math.sqrt(k / m), 12);
    expect(lin.modes[1]!.radPerSecond).toBeCloseTo(Math.sqrt((3 * k) / m), 12);
    expect(lin.modes[0]!.shape).toEqual([1, expect.closeTo(1, 12)]);
    expect(lin.modes[1]!.shape).toEqual([1, expect.closeTo(-1, 12)]);
    // Independent check: ml-matrix eigenvalues of M⁻¹K for the hand-written K = [[2k, −k], [−k, 2k]].
    const independent = new EigenvalueDecomposition(
      new Matrix([
        [2 * k, -k],
        [-k, 2 * k],
      ]).div(m),
    ).realEigenvalues.sort((a, b) => a - b);
    expect(lin.modes.map((mode) => mode.omegaSquared)).toEqual(independent.map((v) => expect.closeTo(v, 9)));
    expect(lin.stiffness).toEqual(
      [
        [2 * k, -k],
        [-k, 2 * k],
      ].map((row) => row.map((v) => expect.closeTo(v, 12))),
    );
  });

  it("damped oscillator with a force input: A, B and eigenvalues −ζω0 ± iωd", () => {
    const [m, c, k] = [2, 0.8, 50];
    const lin = linearizeAbout({ coordinates: ["x"], inputs: ["F"], massMatrix: [["m"]], forcing: ["F - c*x' - k*x"], parameters: { m, c, k } }, { q: [0] });
    expect(lin.A).toEqual(
      [
        [0, 1],
        [-k / m, -c / m],
      ].map((row) => row.map((v) => expect.closeTo(v, 14))),
    );
    expect(lin.B).toEqual([[0], [expect.closeTo(1 / m, 14)]]);
    expect(lin.damping).toEqual([[expect.closeTo(c, 14)]]);
    // Closed form: ω0 = √(k/m), ζ = c/(2√(km)), ωd = ω0√(1−ζ²) — Rao, Mechanical Vibrations (from memory; REFERENCES.md).
    const omega0 = Math.sqrt(k / m);
    const zeta = c / (2 * Math.sqrt(k * m));
    for (const e of lin.eigenvalues) {
      expect(e.re).toBeCloseTo(-zeta * omega0, 12);
      expect(Math.abs(e.im)).toBeCloseTo(omega0 * Math.sqrt(1 - zeta * zeta), 12);
    }
    expect(lin.state).toEqual(["x", "x'"]);
    expect(lin.inputs).toEqual(["F"]);
  });

  it("away from equilibrium, A is the exact Jacobian of the right-hand side (finite differences, seeded)", () => {
    const system = doublePendulum({ m1: 1.3, m2: 0.7, l1: 1.1, l2: 0.8, g: 9.81 });
    const rhs = compileMassMatrixSystem(system);
    const random = seededRandom(99);
    for (let trial = 0; trial < 10; trial++) {
      const x = [0, 0, 0, 0].map(() => random() * 4 - 2);
      const lin = linearizeAbout(system, { q: x.slice(0, 2), rates: x.slice(2) });
      expect(lin.accelerations.some((a) => Math.abs(a) > 1e-3)).toBe(true);
      for (let j = 0; j < 4; j++) {
        const h = 1e-6;
        const plus = new Float64Array(4);
        const minus = new Float64Array(4);
        rhs.stateDerivative(
          0,
          x.map((v, i) => (i === j ? v + h : v)),
          [],
          plus,
        );
        rhs.stateDerivative(
          0,
          x.map((v, i) => (i === j ? v - h : v)),
          [],
          minus,
        );
        for (let i = 0; i < 4; i++) expect(lin.A[i]![j]).toBeCloseTo((plus[i]! - minus[i]!) / (2 * h), 6);
      }
    }
  });

  it("refuses a singular mass matrix with a typed error", () => {
    expect(() =>
      linearizeAbout(
        {
          coordinates: ["x", "y"],
          massMatrix: [
            ["1", "1"],
            ["1", "1"],
          ],
          forcing: ["0", "0"],
          parameters: {},
        },
        { q: [0, 0] },
      ),
    ).toThrow(ModelError);
  });
});

/**
 * A pendulum bob in Cartesian coordinates held on a rod of length l by the
 * constraint x² + y² − l² = 0 (multiplier lambda_rod, forcing f₀ + Aᵀλ by the
 * engine's convention), with a horizontal force F on the bob.
 */
const cartesianPendulum: AnalysisSystem = {
  coordinates: ["x", "y"],
  coordinateUnits: ["m", "m"],
  inputs: ["F"],
  massMatrix: [
    ["m", "0"],
    ["0", "m"],
  ],
  forcing: ["F + 2*x*lambda_rod", "-m*g + 2*y*lambda_rod"],
  parameters: { m: 2, g: 9.81, l: 1.5 },
  constraints: [{ name: "rod", kind: "position", symbol: "lambda_rod", expr: "x^2 + y^2 - l^2" }],
};

describe("linearizeAbout with position constraints", () => {
  it("Cartesian pendulum hanging down: one independent coordinate, ω² = g/l, rod tension m g", () => {
    const lin = linearizeAbout(cartesianPendulum, { q: [0, -1.5], inputs: [0] });
    expect(lin.coordinates).toEqual(["x"]);
    expect(lin.state).toEqual(["x", "x'"]);
    expect(lin.basis).toEqual([[1], [0]]);
    // Small oscillations of a simple pendulum: ω² = g/l (fact of the trade).
    expect(lin.modes).toHaveLength(1);
    expect(lin.modes[0]!.omegaSquared).toBeCloseTo(9.81 / 1.5, 10);
    // The shape lists every coordinate: the bob swings sideways, y is still to first order.
    expect(lin.modes[0]!.shape).toEqual([1, 0]);
    // Tension T = −2 l λ = m g at rest (fact of the trade: the rod carries the weight).
    expect(-2 * 1.5 * lin.multipliers[0]!.value).toBeCloseTo(2 * 9.81, 10);
    // B: a sideways force accelerates the bob by F/m.
    expect(lin.B[1]![0]).toBeCloseTo(1 / 2, 12);
  });

  it("pendulum held aside by a steady force: ω² = g_eff/l, and a step of F changes the tension by sin α · δF", () => {
    const m = 2;
    const g = 9.81;
    const l = 1.5;
    const x = 0.3;
    const y = -Math.sqrt(l * l - x * x);
    const F = (m * g * x) / -y; // tan α = F/(m g) keeps the bob at rest at angle α
    const lin = linearizeAbout(cartesianPendulum, { q: [x, y], inputs: [F] });
    // Effective gravity √(g² + (F/m)²) along the rod (fact of the trade): ω² = g_eff / l.
    const gEffective = Math.hypot(g, F / m);
    expect(lin.modes[0]!.omegaSquared).toBeCloseTo(gEffective / l, 9);
    // The basis follows the circle: δy = −(x/y) δx.
    expect(lin.basis![1]![0]).toBeCloseTo(-x / y, 12);
    // Static tension m g_eff, and with the bob at rest the radial balance T = m g cos α + F sin α
    // gives δT = sin α δF at the instant of a step (fact of the trade).
    expect(-2 * l * lin.multipliers[0]!.value).toBeCloseTo(m * gEffective, 9);
    expect(-2 * l * lin.multiplierRows!.byInput[0]![0]!).toBeCloseTo(x / l, 12);
    expect(lin.multiplierRows!.byState[0]).toEqual([0, 0].map(() => expect.closeTo(0, 12)));
  });

  it("Cartesian double pendulum agrees with the angle form: ω² = (2 ± √2) g/l", () => {
    const lin = linearizeAbout(
      {
        coordinates: ["x1", "y1", "x2", "y2"],
        massMatrix: [
          ["m", "0", "0", "0"],
          ["0", "m", "0", "0"],
          ["0", "0", "m", "0"],
          ["0", "0", "0", "m"],
        ],
        forcing: ["2*x1*lambda_a - 2*(x2 - x1)*lambda_b", "-m*g + 2*y1*lambda_a - 2*(y2 - y1)*lambda_b", "2*(x2 - x1)*lambda_b", "-m*g + 2*(y2 - y1)*lambda_b"],
        parameters: { m: 1, g: 9.81, l: 1 },
        constraints: [
          { name: "a", kind: "position", symbol: "lambda_a", expr: "x1^2 + y1^2 - l^2" },
          { name: "b", kind: "position", symbol: "lambda_b", expr: "(x2 - x1)^2 + (y2 - y1)^2 - l^2" },
        ],
      },
      { q: [0, -1, 0, -2] },
    );
    // Same source as the angle-form test above (Taylor, ch. 11, from memory).
    expect(lin.coordinates).toEqual(["x1", "x2"]);
    expect(lin.modes.map((mode) => mode.omegaSquared)).toEqual([(2 - Math.SQRT2) * 9.81, (2 + Math.SQRT2) * 9.81].map((v) => expect.closeTo(v, 9)));
    // The slow mode: both bobs to one side, the lower one √2 times further (x2 = √2 x1 in angle terms: θ2 = √2 θ1).
    const slow = lin.modes[0]!.shape;
    expect(slow[2]! / slow[0]!).toBeCloseTo(1 + Math.SQRT2, 9);
  });

  it("names a constraint that repeats another, and refuses rate constraints and moving points", () => {
    const twice: AnalysisSystem = {
      ...cartesianPendulum,
      forcing: ["F + 2*x*lambda_rod + 2*x*lambda_again", "-m*g + 2*y*lambda_rod + 2*y*lambda_again"],
      constraints: [...cartesianPendulum.constraints!, { name: "again", kind: "position", symbol: "lambda_again", expr: "x^2 + y^2 - l^2" }],
    };
    expect(() => linearizeAbout(twice, { q: [0, -1.5], inputs: [0] })).toThrow(/constraint "again" is redundant/);
    const rolling: AnalysisSystem = { ...cartesianPendulum, constraints: [{ name: "roll", kind: "rate", symbol: "mu_roll", expr: "x' - y'" }] };
    expect(() => linearizeAbout(rolling, { q: [0, -1.5], inputs: [0] })).toThrow(ModelError);
    expect(() => linearizeAbout(cartesianPendulum, { q: [0, -1.5], rates: [1, 0], inputs: [0] })).toThrow(/at rest/);
  });
});
