import { describe, expect, it } from "vitest";
import { documentToModel, modelToDocument, parseStoredDocument } from "@/lib/notebook/document";
import { TEMPLATES, nLinkChain, templateDocument, templateModel } from "@/lib/notebook/templates";
import { parseExpression, symbolsOf, type Model } from "@/lib/mechanics";
import { checkSymbolName, checkUnitSyntax } from "@/lib/notebook/field-checks";

/** Every expression of a model with the field it sits in. */
function expressions(model: Model): [string, string][] {
  return [
    ...(model.definitions ?? []).map((d, i): [string, string] => [`definitions[${i}].expr`, d.expr]),
    ["kinetic", model.kinetic],
    ["potential", model.potential],
    ...(model.dissipation ? [["dissipation", model.dissipation] as [string, string]] : []),
    ...Object.entries(model.forces ?? {}).map(([q, expr]): [string, string] => [`forces.${q}`, expr]),
  ];
}

const everyTemplate = [...TEMPLATES.filter((t) => !t.size).map((t) => t.build()), ...[1, 2, 5, 8].map(nLinkChain)];

describe("templates", () => {
  it.each(everyTemplate.map((model) => [model.title, model] as const))("%s parses, uses only its own symbols and valid units", (_title, model) => {
    const known = new Set([
      "t",
      ...model.coordinates.map((c) => c.name),
      ...model.parameters.map((p) => p.name),
      ...(model.inputs ?? []).map((u) => u.name),
      ...(model.definitions ?? []).map((d) => d.name),
    ]);
    for (const [, text] of expressions(model)) {
      for (const name of symbolsOf(parseExpression(text)).keys()) expect(known, `${name} in ${text}`).toContain(name);
    }
    for (const entry of [...model.coordinates, ...model.parameters, ...(model.inputs ?? [])]) {
      expect(checkUnitSyntax(entry.unit)).toEqual({ ok: true });
      expect(checkSymbolName(entry.name)).toEqual({ ok: true });
    }
    expect(Object.keys(model.forces ?? {}).every((q) => model.coordinates.some((c) => c.name === q))).toBe(true);
    expect(documentToModel(modelToDocument(model))).toEqual(model);
  });

  it("builds the N-link chain for N = 1…8 and refuses other sizes", () => {
    const three = templateModel("n-link-chain", { links: 3 });
    expect(three.coordinates.map((c) => c.name)).toEqual(["theta1", "theta2", "theta3"]);
    expect(three.definitions!.map((d) => `${d.name} = ${d.expr}`)).toEqual([
      "x1 = l1*sin(theta1)",
      "y1 = -l1*cos(theta1)",
      "x2 = x1 + l2*sin(theta2)",
      "y2 = y1 - l2*cos(theta2)",
      "x3 = x2 + l3*sin(theta3)",
      "y3 = y2 - l3*cos(theta3)",
    ]);
    expect(three.kinetic).toBe("1/2*m1*(x1'^2 + y1'^2) + 1/2*m2*(x2'^2 + y2'^2) + 1/2*m3*(x3'^2 + y3'^2)");
    expect(three.potential).toBe("m1*g*y1 + m2*g*y2 + m3*g*y3");
    expect(nLinkChain(8).coordinates).toHaveLength(8);
    for (const bad of [0, 9, 2.5, Number.NaN]) expect(() => nLinkChain(bad)).toThrow(RangeError);
  });

  it("opens a template document with a note saying what it models, valid as stored", () => {
    const doc = templateDocument("cart-with-pendulum");
    expect(doc.cells[0]).toMatchObject({ kind: "note", markdown: expect.stringContaining("crane trolley") });
    expect(parseStoredDocument(JSON.parse(JSON.stringify(doc))).ok).toBe(true);
    expect(documentToModel(doc)).toEqual(templateModel("cart-with-pendulum"));
  });
});
