import { describe, expect, it } from "vitest";
import { compareEquations, compareTerms, motionNames, termsOfResidual, type EquationChange } from "@/lib/history/term-diff";
import { deriveModel, toLatexTerms, validateModel, type Model } from "@/lib/mechanics";
import { templateModel } from "@/lib/notebook/templates";

const hookBlock = templateModel("single-pendulum");

function equationsOf(model: Model) {
  return deriveModel(validateModel(model)).equations;
}

function compare(before: Model, after: Model): EquationChange[] {
  const isMotion = motionNames({ coordinates: before.coordinates.map((c) => c.name), inputs: (before.inputs ?? []).map((u) => u.name) });
  return compareEquations(equationsOf(before), equationsOf(after), isMotion);
}

function statuses(change: EquationChange): string[] {
  return change.terms.map((term) =>
    term.status === "changed"
      ? `changed:${term.before.map((t) => t.text).join("+")}>${term.after.map((t) => t.text).join("+")}`
      : `${term.status}:${term.term.text}`,
  );
}

describe("compareEquations", () => {
  it("finds every term unchanged when nothing changed", () => {
    const [theta] = compare(hookBlock, hookBlock);
    expect(theta!.status).toBe("unchanged");
    expect(theta!.counts).toEqual({ added: 0, removed: 0, changed: 0, unchanged: 2 });
  });

  it("shows pivot damping as one added term c·θ'", () => {
    const damped: Model = {
      ...hookBlock,
      parameters: [...hookBlock.parameters, { name: "c", unit: "N*m*s/rad", value: 2 }],
      dissipation: "1/2*c*theta'^2",
    };
    const [theta] = compare(hookBlock, damped);
    // Rayleigh's dissipation function D = ½cθ'² adds ∂D/∂θ' = cθ' to the θ equation
    // (Goldstein, Poole & Safko, Classical Mechanics, 3rd ed., §1.5).
    expect(statuses(theta!)).toEqual(["unchanged:m*l^2*theta''", "added:c*theta'", "unchanged:m*l*g*sin(theta)"]);
    expect(theta!.status).toBe("changed");
  });

  it("pairs terms multiplying the same motion as one changed term: a point mass's m·l² replaced by a body's J", () => {
    const body: Model = {
      ...hookBlock,
      parameters: [...hookBlock.parameters, { name: "J", unit: "kg*m^2", value: 500 }],
      kinetic: "1/2*J*theta'^2",
    };
    const [theta] = compare(hookBlock, body);
    // A point mass m at distance l has moment of inertia m·l² about the pivot (fact of the trade);
    // the θ'' term's coefficient changes, the gravity term does not.
    expect(statuses(theta!)).toEqual(["changed:m*l^2*theta''>J*theta''", "unchanged:m*l*g*sin(theta)"]);
    const changed = theta!.terms[0]!;
    expect(changed.status === "changed" && changed.motionLatex).toBe("\\ddot{\\theta}");
  });

  it("reports a flipped sign as a changed term", () => {
    const upsideDown: Model = { ...hookBlock, potential: "m*g*l*cos(theta)" };
    const [theta] = compare(hookBlock, upsideDown);
    // V = +m g l cos θ is the inverted pendulum: the restoring term changes sign (fact of the trade).
    expect(statuses(theta!)).toEqual(["unchanged:m*l^2*theta''", "changed:m*l*g*sin(theta)>-m*l*g*sin(theta)"]);
  });

  it("adds a whole equation for a new coordinate and removes one that is gone", () => {
    const cart = templateModel("cart-with-pendulum");
    const changes = compare(hookBlock, cart);
    expect(changes.map((change) => `${change.coordinate}:${change.status}`)).toEqual(["x:added", "theta:changed"]);
    expect(changes[0]!.terms.every((term) => term.status === "added")).toBe(true);
    const back = compare(cart, hookBlock);
    expect(back.map((change) => `${change.coordinate}:${change.status}`)).toEqual(["theta:changed", "x:removed"]);
  });
});

describe("termsOfResidual", () => {
  it("uses the engine's term ids, so a term is addressed as in the notebook", () => {
    const residual = "m*l^2*theta'' + m*l*g*sin(theta)";
    const isMotion = motionNames({ coordinates: ["theta"], inputs: [] });
    expect(termsOfResidual(residual, isMotion).map((term) => term.view.id)).toEqual(toLatexTerms(residual).terms.map((term) => term.id));
  });

  it("keeps inputs and time in the motion, so a changed input gain is one changed term", () => {
    const isMotion = motionNames({ coordinates: ["x"], inputs: ["F"] });
    const changes = compareTerms(termsOfResidual("m*x'' - F", isMotion), termsOfResidual("m*x'' - k_F*F", isMotion));
    expect(changes.map((change) => change.status)).toEqual(["unchanged", "changed"]);
  });
});
