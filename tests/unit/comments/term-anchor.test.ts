import { describe, expect, it } from "vitest";
import { toLatexTerms } from "@/lib/mechanics";
import { liveTermsOf, parseTermKey, termKey, termThreadState } from "@/lib/comments/term-anchor";

// Equations as the evaluation answers them: each residual's terms from the engine.
function equationsOf(residuals: Record<string, string>) {
  return Object.entries(residuals).map(([coordinate, residual]) => ({ coordinate, terms: toLatexTerms(residual).terms }));
}
const live = (residuals: Record<string, string>) => new Map(liveTermsOf(equationsOf(residuals), "eqs").map((term) => [term.key, term]));

describe("term anchors", () => {
  // Pendulum residual m*l^2*theta'' + m*g*l*sin(theta) (Goldstein, Classical Mechanics, 3rd ed., §1.6).
  const before = { theta: "m*l^2*theta'' + m*g*l*sin(theta)" };

  it("keys a term by cell, coordinate and its canonical text", () => {
    const terms = [...live(before).values()];
    expect(terms.map((term) => term.text)).toEqual(["m*l^2*theta''", "m*g*l*sin(theta)"]);
    const gravity = terms[1]!;
    expect(gravity.key).toBe(termKey({ cellId: "eqs", coordinate: "theta", termId: gravity.termId }));
    expect(parseTermKey(gravity.key)).toEqual({ cellId: "eqs", coordinate: "theta", termId: gravity.termId });
    expect(parseTermKey("a/b/c/theta/1k")).toEqual({ cellId: "a/b/c", coordinate: "theta", termId: "1k" });
    expect(parseTermKey("theta/1k")).toBeNull();
  });

  it("re-attaches to the same term when an edit keeps it, and is outdated when the term disappears", () => {
    const gravityKey = [...live(before).values()][1]!.key;
    // A damper added: the gravity term stays, so the thread stays on it.
    const damped = live({ theta: "m*l^2*theta'' + c*theta' + m*g*l*sin(theta)" });
    expect(termThreadState(gravityKey, damped)).toMatchObject({ state: "attached", term: { text: "m*g*l*sin(theta)" } });
    // Gravity along another axis: the term reads differently, so the thread is outdated.
    const changed = live({ theta: "m*l^2*theta'' + m*g*l*cos(theta)" });
    expect(termThreadState(gravityKey, changed)).toEqual({ state: "outdated" });
    // The same term in another equation is another term.
    const moved = live({ phi: "m*l^2*theta'' + m*g*l*sin(theta)" });
    expect(termThreadState(gravityKey, moved)).toEqual({ state: "outdated" });
    expect(termThreadState(gravityKey, null)).toEqual({ state: "unknown" });
  });
});
