import { describe, expect, it } from "vitest";
import katex from "katex";
import { previewLatex } from "@/lib/notebook/latex-preview";
import { toLatex } from "@/lib/mechanics";

describe("live preview", () => {
  it.each(["1/2*m*(l*theta')^2", "-m*g*l*cos(theta)", "x1 + l2*sin(theta2)", "1/2*c*theta1'^2"])(
    "renders %s as the engine does, and KaTeX accepts it",
    (text) => {
      const latex = previewLatex(text);
      expect(latex).toBe(toLatex(text));
      expect(() => katex.renderToString(latex!, { throwOnError: true })).not.toThrow();
    },
  );

  it("gives nothing for blank or unparseable text instead of throwing", () => {
    expect(previewLatex("  ")).toBeNull();
    expect(previewLatex("m*(")).toBeNull();
    expect(previewLatex("2x")).toBeNull();
  });
});
