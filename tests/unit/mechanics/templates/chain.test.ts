import { describe, expect, it } from "vitest";
import { deriveModel } from "@/lib/mechanics/derive";
import { chainModel } from "@/lib/mechanics/templates/chain";
import { topLevelTerms } from "@/lib/mechanics/terms";
import { validateModel } from "@/lib/mechanics/validate-model";

describe("chainModel", () => {
  it("builds valid N-link chains whose equations have the product-to-sum term counts", () => {
    // Expected counts: each coupling m_k l_i l_j cos/sin(θi−θj) once per mass, as in the
    // expanded textbook form (Taylor 2005, ch. 11 for N = 2, from memory; N = 3 extends it).
    expect(deriveModel(validateModel(chainModel({ links: 2 }))).equations.map((e) => topLevelTerms(e.residual).length)).toEqual([6, 4]);
    expect(deriveModel(validateModel(chainModel({ links: 3 }))).equations.map((e) => topLevelTerms(e.residual).length)).toEqual([12, 10, 6]);
  });

  it("gives equation k of an N-link chain N(N+1) − k(k−1) terms", () => {
    // Counting argument (a fact of the trade, no source): equation k has Σ_{i≥k} m_i l_k² θk'' terms,
    // m_i l_j l_k (θj''cos, θj'² sin) for j ≠ k and i ≥ max(j, k), and Σ_{i≥k} m_i g l_k sin θk.
    for (let n = 4; n <= 6; n++) {
      const counts = deriveModel(chainModel({ links: n })).equations.map((e) => topLevelTerms(e.residual).length);
      expect(counts).toEqual(Array.from({ length: n }, (_, i) => n * (n + 1) - i * (i + 1)));
    }
  });

  it("refuses a chain without links", () => {
    expect(() => chainModel({ links: 0 })).toThrow(RangeError);
  });
});
