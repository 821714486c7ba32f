/**
 * Greek letters typed as themselves. Names in the expression language are
 * ASCII (`theta1`) and render as the letter (θ₁); a typed or pasted `θ` is
 * read as the name it renders, and messages say so where it cannot be.
 */

/** Each Greek letter (and its common variant forms) with the name that renders as it. */
export const GREEK_LETTER_NAMES: Readonly<Record<string, string>> = {
  α: "alpha",
  β: "beta",
  γ: "gamma",
  δ: "delta",
  ε: "epsilon",
  ϵ: "epsilon",
  ζ: "zeta",
  η: "eta",
  θ: "theta",
  ϑ: "theta",
  ι: "iota",
  κ: "kappa",
  ϰ: "kappa",
  λ: "lambda",
  μ: "mu",
  µ: "mu",
  ν: "nu",
  ξ: "xi",
  ο: "omicron",
  π: "pi",
  ϖ: "pi",
  ρ: "rho",
  ϱ: "rho",
  σ: "sigma",
  ς: "sigma",
  τ: "tau",
  υ: "upsilon",
  φ: "phi",
  ϕ: "phi",
  χ: "chi",
  ψ: "psi",
  ω: "omega",
  Α: "Alpha",
  Β: "Beta",
  Γ: "Gamma",
  Δ: "Delta",
  Ε: "Epsilon",
  Ζ: "Zeta",
  Η: "Eta",
  Θ: "Theta",
  Ι: "Iota",
  Κ: "Kappa",
  Λ: "Lambda",
  Μ: "Mu",
  Ν: "Nu",
  Ξ: "Xi",
  Ο: "Omicron",
  Π: "Pi",
  Ρ: "Rho",
  Σ: "Sigma",
  Τ: "Tau",
  Υ: "Upsilon",
  Φ: "Phi",
  Χ: "Chi",
  Ψ: "Psi",
  Ω: "Omega",
};

const GREEK_PATTERN = new RegExp(`[${Object.keys(GREEK_LETTER_NAMES).join("")}]`, "gu");

/** Whether the text holds a Greek letter this module can spell. */
export function hasGreekLetter(text: string): boolean {
  GREEK_PATTERN.lastIndex = 0;
  return GREEK_PATTERN.test(text);
}

/**
 * Replaces every Greek letter by its name.
 *
 * @example spellGreekLetters("θ1 + ω'") // "theta1 + omega'"
 */
export function spellGreekLetters(text: string): string {
  return text.replace(GREEK_PATTERN, (letter) => GREEK_LETTER_NAMES[letter]!);
}

/** The sentence that tells how to write a Greek letter, e.g. `write θ as "theta"`. */
export function greekAdvice(text: string): string {
  const letters = [...new Set(text.match(GREEK_PATTERN) ?? [])];
  return `write Greek letters by name (${letters.map((letter) => `${letter} as "${GREEK_LETTER_NAMES[letter]}"`).join(", ")}); they are shown as the letter`;
}
