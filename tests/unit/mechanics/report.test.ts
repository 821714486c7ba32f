import { describe, expect, it } from "vitest";
import { ModelError, derivationReport } from "@/lib/mechanics";

const cartSpring = {
  title: "Trolley on a buffer spring",
  coordinates: [{ name: "x", unit: "m" }],
  parameters: [
    { name: "M", unit: "kg", value: 1200 },
    { name: "k", unit: "N/m" },
  ],
  kinetic: "1/2*M*x'^2",
  potential: "1/2*k*x^2",
};

describe("derivationReport", () => {
  it('reports the CLI\'s keys, LaTeX without the "= 0", and the conserved energy function', () => {
    const report = derivationReport(cartSpring);
    expect(Object.keys(report).sort()).toEqual(["conserved", "coordinates", "energy", "equations", "forcing", "massMatrix", "timingMs"]);
    // Undamped mass–spring: M x'' + k x = 0 (fact of the trade).
    expect(report.equations).toEqual([{ coordinate: "x", residual: "M*x'' + k*x", latex: "M\\,\\ddot{x} + k\\,x" }]);
    expect(report.massMatrix).toEqual([["M"]]);
    expect(report.forcing).toEqual(["-k*x"]);
    // With no time dependence, dissipation or applied force the energy function T + V is conserved (fact of the trade).
    expect(report.energy).toBe("M*x'^2/2 + k*x^2/2");
    expect(report.conserved).toEqual([{ name: "energy function", expr: "M*x'^2/2 + k*x^2/2", reason: expect.any(String) }]);
  });

  it("refuses a model whose units do not add up, naming the field", () => {
    expect(() => derivationReport({ ...cartSpring, potential: "1/2*k*x" })).toThrow(ModelError);
    expect(() => derivationReport({ ...cartSpring, potential: "1/2*k*x" })).toThrow(/potential/);
  });
});
