import { describe, expect, it } from "vitest";
import { CODE_LANGUAGES } from "@/lib/mechanics/codegen";
import type { MassMatrixSystem } from "@/lib/mechanics/compile";
import { ModelError } from "@/lib/mechanics/errors";
import { exportStateSpace, frequencyResponse, polesOf, stateSpaceOf, transmissionZeros, type StateSpace } from "@/lib/mechanics/frequency-response";
import { linearizeAbout } from "@/lib/mechanics/linearize";

const [m, c, k] = [2, 0.8, 50];
const msd: MassMatrixSystem = { coordinates: ["x"], inputs: ["F"], massMatrix: [["m"]], forcing: ["F - c*x' - k*x"], parameters: { m, c, k } };

function msdStateSpace(outputs = [{ name: "x", expr: "x" }]): StateSpace {
  const point = { q: [0] };
  return stateSpaceOf(msd, linearizeAbout(msd, point), point, outputs);
}

/** The error `work` throws; fails the test when it throws nothing. */
function thrown(work: () => unknown): ModelError {
  try {
    work();
  } catch (error) {
    expect(error).toBeInstanceOf(ModelError);
    return error as ModelError;
  }
  throw new Error("expected an error");
}

describe("frequency response", () => {
  it("mass–spring–damper: |X/F| = 1/√((k − mω²)² + (cω)²)", () => {
    const ss = msdStateSpace();
    const response = frequencyResponse(ss, { input: "F", output: "x", from: 0.1, to: 100, points: 120 });
    expect(response.frequencies).toHaveLength(120);
    response.frequencies.forEach((w, i) => {
      // Forced damped response of a single degree of freedom: Rao, Mechanical Vibrations, forced damped response.
      const magnitude = 1 / Math.sqrt((k - m * w * w) ** 2 + (c * w) ** 2);
      expect(response.magnitudeDb[i]).toBeCloseTo(20 * Math.log10(magnitude), 9);
      // Same source: phase lag φ = atan2(cω, k − mω²), so arg H = −φ, from 0 to −180°.
      expect(response.phaseDeg[i]).toBeCloseTo((-Math.atan2(c * w, k - m * w * w) * 180) / Math.PI, 7);
    });
  });

  it("poles with natural frequency √(k/m) and damping ratio c/(2√(km)); no finite zeros for the displacement", () => {
    const ss = msdStateSpace();
    const poles = polesOf(ss.A);
    expect(poles).toHaveLength(2);
    for (const p of poles) {
      // ω_n = √(k/m), ζ = c/(2√(k m)) (Rao, Mechanical Vibrations, free damped vibration).
      expect(p.naturalFrequency).toBeCloseTo(Math.sqrt(k / m), 12);
      expect(p.dampingRatio).toBeCloseTo(c / (2 * Math.sqrt(k * m)), 12);
    }
    // X/F = 1/(m s² + c s + k) has no zeros; the velocity output s/(m s² + c s + k) one at s = 0 (fact of the trade).
    expect(transmissionZeros(ss, 0, 0)).toEqual({ available: true, zeros: [] });
    const velocity = msdStateSpace([{ name: "v", expr: "x'" }]);
    const zeros = transmissionZeros(velocity, "F", "v");
    expect(zeros.available).toBe(true);
    if (zeros.available) {
      expect(zeros.zeros).toHaveLength(1);
      expect(Math.abs(zeros.zeros[0]!.re) + Math.abs(zeros.zeros[0]!.im)).toBeLessThan(1e-9);
    }
  });

  it("an acceleration output gets its C and D through the equations: x'' = (F − c x' − k x)/m", () => {
    const ss = msdStateSpace([{ name: "a", expr: "x''" }]);
    // Newton's second law of the mass (fact of the trade).
    expect(ss.C[0]![0]).toBeCloseTo(-k / m, 12);
    expect(ss.C[0]![1]).toBeCloseTo(-c / m, 12);
    expect(ss.D[0]![0]).toBeCloseTo(1 / m, 12);
    // A feedthrough term: zeros of m s²/(m s² + c s + k)·(1/m) are the double zero at s = 0 (eigenvalues of A − B D⁻¹ C).
    const zeros = transmissionZeros(ss, 0, 0);
    expect(zeros.available && zeros.zeros.length).toBe(2);
    if (zeros.available) for (const z of zeros.zeros) expect(Math.hypot(z.re, z.im)).toBeLessThan(1e-9);
  });

  it("two masses: the zero of the first mass's displacement is the anti-resonance √(k2/m2)", () => {
    const [m1, m2, k1, k2] = [1, 0.5, 40, 10];
    const system: MassMatrixSystem = {
      coordinates: ["x1", "x2"],
      inputs: ["F"],
      massMatrix: [
        ["m1", "0"],
        ["0", "m2"],
      ],
      forcing: ["F - k1*x1 - k2*(x1 - x2)", "-k2*(x2 - x1)"],
      parameters: { m1, m2, k1, k2 },
    };
    const point = { q: [0, 0] };
    const ss = stateSpaceOf(system, linearizeAbout(system, point), point, [{ name: "x1", expr: "x1" }]);
    const zeros = transmissionZeros(ss, 0, 0);
    // Undamped vibration absorber: the driven mass stands still at ω = √(k2/m2) (Rao, Mechanical Vibrations, vibration absorber).
    expect(zeros.available).toBe(true);
    if (zeros.available) {
      expect(zeros.zeros.map((z) => Math.abs(z.im)).sort()).toEqual([expect.closeTo(Math.sqrt(k2 / m2), 9), expect.closeTo(Math.sqrt(k2 / m2), 9)]);
    }
    const response = frequencyResponse(ss, { input: 0, output: 0, frequencies: [Math.sqrt(k2 / m2) * (1 + 1e-6)] });
    expect(response.magnitudeDb[0]).toBeLessThan(-100);
  });

  it("names the output at fault and refuses unknown inputs", () => {
    expect(() => msdStateSpace([{ name: "bad", expr: "x +" }])).toThrow(ModelError);
    const error = thrown(() =>
      msdStateSpace([
        { name: "ok", expr: "x" },
        { name: "bad", expr: "y" },
      ]),
    );
    expect(error.field).toBe("outputs[1].expr");
    expect(() => frequencyResponse(msdStateSpace(), { input: "G", output: 0 })).toThrow(/no input "G"/);
  });

  it("exports A, B, C, D as JSON, CSV and code in every export language", () => {
    const ss = msdStateSpace();
    expect(JSON.parse(exportStateSpace(ss, "json"))).toEqual({ state: ["x", "x'"], inputs: ["F"], outputs: ["x"], A: ss.A, B: ss.B, C: ss.C, D: ss.D });
    const csv = exportStateSpace(ss, "csv").trim().split("\n");
    expect(csv[0]).toBe("matrix,row,column,value");
    expect(csv).toContain(`A,x',x,${-k / m}`);
    expect(csv).toContain(`B,x',F,${1 / m}`);
    expect(csv).toHaveLength(1 + 4 + 2 + 2 + 1);
    for (const language of CODE_LANGUAGES) {
      const code = exportStateSpace(ss, language);
      expect(code, language).toContain("-25");
      expect(code, language).toMatch(/qualified/i);
    }
    expect(exportStateSpace(ss, "python")).toContain("A = np.array([\n    [0.0, 1.0],\n    [-25.0, -0.4],\n], dtype=float)");
    expect(exportStateSpace(ss, "matlab")).toContain("A = [0.0 1.0; -25.0 -0.4];");
    expect(exportStateSpace(ss, "c")).toContain("static const double A[4] = {0.0, 1.0, -25.0, -0.4};");
  });
});
