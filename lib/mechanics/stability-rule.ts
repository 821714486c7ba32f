/**
 * The stability rule in words, kept apart from stability.ts (which needs
 * ml-matrix) so the notebook can show it beside the verdict without loading
 * the numerics. stability.ts implements exactly this text.
 */
export const STABILITY_RULE =
  "From the eigenvalues λ of A, with the tolerance τ = 10⁻⁷ × the frequency scale of A (the larger of √‖A₂₁‖ and ‖A₂₂‖): " +
  "unstable if some Re λ > τ, or if an eigenvalue on the imaginary axis (|Re λ| ≤ τ) has a Jordan block (fewer eigenvectors than its multiplicity; the motion grows in proportion to t); " +
  "stable if every Re λ < −τ (disturbances decay), or if the eigenvalues on the axis are simple and non-zero and the stiffness is symmetric positive definite (a strict minimum of the potential: Lagrange–Dirichlet; bounded, not decaying); " +
  "marginal otherwise — a zero eigenvalue (a free direction such as a cyclic coordinate) or a repeated one on the axis.";
