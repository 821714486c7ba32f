import { EigenvalueDecomposition, Matrix } from "ml-matrix";
import { describe, expect, it } from "vitest";
import { compileMassMatrixSystem, type MassMatrixSystem } from "@/lib/mechanics/compile";
import { ModelError } from "@/lib/mechanics/errors";
import { linearizeAbout } from "@/lib/mechanics/linearize";
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
