import { describe, expect, it } from "vitest";
import type { MassMatrixSystem } from "@/lib/mechanics/compile";
import { linearizeAbout } from "@/lib/mechanics/linearize";
import { classifyStability, formatEigenvalue, frequencyScale, STABILITY_RULE, STABILITY_TOLERANCE } from "@/lib/mechanics/stability";

/** Unit masses, q'' = forcing; a linear system written out by hand. */
const linearSystem = (coordinates: string[], forcing: string[], parameters: Record<string, number> = {}): MassMatrixSystem => ({
  coordinates,
  massMatrix: coordinates.map((_, i) => coordinates.map((__, j) => (i === j ? "1" : "0"))),
  forcing,
  parameters,
});
const verdictOf = (system: MassMatrixSystem) => classifyStability(linearizeAbout(system, { q: system.coordinates.map(() => 0) }));

describe("classifyStability", () => {
  it("a damped oscillator is asymptotically stable", () => {
    // x'' + 2ζω x' + ω² x = 0 with ζ > 0 decays (fact of the trade).
    const verdict = verdictOf(linearSystem(["x"], ["-w^2*x - 2*z*w*x'"], { w: 3, z: 0.05 }));
    expect(verdict.stability).toBe("stable");
    expect(verdict.asymptotic).toBe(true);
    expect(verdict.reason).toMatch(/negative real part; the slowest decays like exp\(-0\.15·t\)/);
  });

  it("an undamped pendulum is stable but not asymptotically: simple ±iω and a positive definite stiffness (Lagrange–Dirichlet)", () => {
    // Lagrange–Dirichlet: a strict minimum of the potential is a stable equilibrium
    // (Goldstein, Classical Mechanics, 3rd ed., §6.1 — from memory).
    const verdict = verdictOf({ coordinates: ["theta"], massMatrix: [["m*l^2"]], forcing: ["-m*g*l*sin(theta)"], parameters: { m: 1, l: 0.8, g: 9.81 } });
    expect(verdict.stability).toBe("stable");
    expect(verdict.asymptotic).toBe(false);
    expect(verdict.reason).toContain("Lagrange–Dirichlet");
    expect(verdict.reason).toContain(`±${Number(Math.sqrt(9.81 / 0.8).toPrecision(4))}i`);
  });

  it("a free mass with neither stiffness nor damping has a Jordan block at 0: unstable", () => {
    // x'' = 0: x = x₀ + v₀t grows with t; A = [0 1; 0 0] is a 2×2 Jordan block (fact of the trade).
    const verdict = verdictOf(linearSystem(["x"], ["0*x"]));
    expect(verdict.stability).toBe("unstable");
    expect(verdict.reason).toMatch(/λ = 0 is repeated 2 times .* only 1 eigenvector \(a Jordan block\)/);
  });

  it("a free mass with damping has a simple zero eigenvalue: marginal", () => {
    // x'' = −c x': λ = 0 and −c; a push dies out but the position stays where it went (fact of the trade).
    const verdict = verdictOf(linearSystem(["x"], ["-c*x'"], { c: 0.4 }));
    expect(verdict.stability).toBe("marginal");
    expect(verdict.reason).toMatch(/^λ = 0 is an eigenvalue: a direction with no restoring stiffness/);
  });

  it("two free damped masses: λ = 0 twice, each with its own eigenvector — marginal, not a Jordan block", () => {
    const verdict = verdictOf(linearSystem(["x", "y"], ["-c*x'", "-d*y'"], { c: 0.4, d: 0.7 }));
    expect(verdict.stability).toBe("marginal");
    expect(verdict.reason).toContain("2 times, each with its own eigenvector");
  });

  it("two equal undamped oscillators: ±iω repeated without a Jordan block — marginal", () => {
    const verdict = verdictOf(linearSystem(["x", "y"], ["-w^2*x", "-w^2*y"], { w: 2 }));
    expect(verdict.stability).toBe("marginal");
    expect(verdict.reason).toMatch(/λ = ±2i is repeated 2 times on the imaginary axis \(no Jordan block\)/);
  });

  it("equal frequencies with a one-way (circulatory) coupling: ±iω repeated with one eigenvector — unstable", () => {
    // x'' = −ω²x − e·y, y'' = −ω²y: y drives x at its own natural frequency, x grows like t·sin ωt
    // (resonance; a defective eigenvalue gives secular terms — fact of the trade).
    const verdict = verdictOf(linearSystem(["x", "y"], ["-w^2*x - e*y", "-w^2*y"], { w: 2, e: 0.5 }));
    expect(verdict.stability).toBe("unstable");
    expect(verdict.reason).toContain("Jordan block");
  });

  it("gyroscopic stabilization: simple imaginary eigenvalues with an indefinite stiffness — marginal", () => {
    // M q'' + G q' + K q = 0, G skew with gain g, K = −k I: λ⁴ + (g² − 2k) λ² + k² = 0 has only imaginary
    // roots for g² > 4k (Thomson–Tait gyroscopic stabilization; Meirovitch, Methods of Analytical Dynamics, ch. 6 — from memory).
    const system = linearSystem(["x", "y"], ["k*x + g*y'", "k*y - g*x'"], { k: 1, g: 3 });
    const lin = linearizeAbout(system, { q: [0, 0] });
    const tolerance = STABILITY_TOLERANCE * frequencyScale(lin.A);
    expect(lin.eigenvalues.every((l) => Math.abs(l.re) <= tolerance)).toBe(true);
    const verdict = classifyStability(lin);
    expect(verdict.stability).toBe("marginal");
    expect(verdict.reason).toMatch(/without a positive definite stiffness/);
  });

  it("an eigenvalue with a positive real part is unstable, with the growth rate named", () => {
    // Inverted pendulum: θ'' = (g/l) θ, λ = ±√(g/l) (fact of the trade).
    const verdict = verdictOf({ coordinates: ["theta"], massMatrix: [["1"]], forcing: ["g/l*sin(theta)"], parameters: { g: 9.81, l: 0.5 } });
    expect(verdict.stability).toBe("unstable");
    expect(verdict.reason).toContain(`λ = ${Number(Math.sqrt(9.81 / 0.5).toPrecision(4))}`);
  });

  it("scales the tolerance with the matrix: the same lightly damped oscillator is stable at any time scale", () => {
    // ζ = 10⁻⁴: Re λ = −ζω is far below any fixed tolerance when ω is small, but 10³ × above τ = 10⁻⁷ω.
    for (const w of [1e-4, 1, 1e4]) {
      const lin = linearizeAbout(linearSystem(["x"], ["-w^2*x - 2*z*w*x'"], { w, z: 1e-4 }), { q: [0] });
      const verdict = classifyStability(lin);
      expect(verdict.tolerance).toBeCloseTo(STABILITY_TOLERANCE * Math.max(w, 2e-4 * w), 20);
      expect(verdict.stability).toBe("stable");
      expect(verdict.asymptotic).toBe(true);
    }
  });

  it("states the rule it implements", () => {
    expect(STABILITY_RULE).toContain("Jordan block");
    expect(STABILITY_RULE).toContain("10⁻⁷");
    expect(STABILITY_TOLERANCE).toBe(1e-7);
    expect(formatEigenvalue({ re: -0.04952, im: -2.2481 })).toBe("-0.04952 ± 2.248i");
    expect(formatEigenvalue({ re: 1e-18, im: 0 }, 1e-12)).toBe("0");
  });
});
