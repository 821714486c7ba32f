import { describe, expect, it } from "vitest";
import * as Y from "yjs";
import { createTextAnchor, resolveTextAnchor } from "@/lib/comments/text-anchor";

// Two replicas of one field, exchanging updates the way the collaboration server relays them.
function replicas(initial: string) {
  const a = new Y.Doc();
  const b = new Y.Doc();
  a.getText("expr").insert(0, initial);
  Y.applyUpdate(b, Y.encodeStateAsUpdate(a));
  const sync = () => {
    Y.applyUpdate(b, Y.encodeStateAsUpdate(a, Y.encodeStateVector(b)));
    Y.applyUpdate(a, Y.encodeStateAsUpdate(b, Y.encodeStateVector(a)));
  };
  return { a, b, ta: a.getText("expr"), tb: b.getText("expr"), sync };
}

const lagrangian = "1/2*m*l^2*theta'^2 + m*g*l*cos(theta)";

describe("text anchors", () => {
  it("quotes the span it was made on", () => {
    const { a, ta } = replicas(lagrangian);
    const index = lagrangian.indexOf("m*g*l");
    const anchor = createTextAnchor(ta, index, 5);
    expect(anchor.quote).toBe("m*g*l");
    expect(resolveTextAnchor(a, ta, anchor)).toEqual({ state: "attached", index, length: 5, text: "m*g*l" });
  });

  it("follows concurrent inserts before and inside its span, and ignores inserts at its edges", () => {
    const { a, b, ta, tb, sync } = replicas(lagrangian);
    const index = lagrangian.indexOf("m*g*l");
    const anchor = createTextAnchor(ta, index, 5);
    // Meanwhile, on the other replica: text before the span, text inside it …
    tb.insert(0, "T - V: ");
    tb.insert(tb.toString().indexOf("g*l"), "2*");
    // … and on this one, text typed right before its first and right after its last character.
    ta.insert(index + 5, "*1");
    ta.insert(index, "+ ");
    sync();
    expect(ta.toString()).toBe(tb.toString());
    for (const [doc, text] of [
      [a, ta],
      [b, tb],
    ] as const) {
      const resolved = resolveTextAnchor(doc, text, anchor);
      expect(resolved).toMatchObject({ state: "attached", text: "m*2*g*l" });
    }
  });

  it("is detached, quote kept, when its text is deleted, also concurrently with an insert elsewhere", () => {
    const { a, b, ta, tb, sync } = replicas(lagrangian);
    const index = lagrangian.indexOf("cos(theta)");
    const anchor = createTextAnchor(ta, index, "cos(theta)".length);
    tb.delete(index - 1, "cos(theta)".length + 1);
    ta.insert(0, "L = ");
    sync();
    expect(resolveTextAnchor(a, ta, anchor)).toEqual({ state: "detached", reason: "deleted" });
    expect(resolveTextAnchor(b, tb, anchor)).toEqual({ state: "detached", reason: "deleted" });
    expect(anchor.quote).toBe("cos(theta)");
  });

  it("keeps the characters that survive a partial delete", () => {
    const { a, ta } = replicas(lagrangian);
    const index = lagrangian.indexOf("m*g*l");
    const anchor = createTextAnchor(ta, index, 5);
    ta.delete(index, 2);
    expect(resolveTextAnchor(a, ta, anchor)).toMatchObject({ state: "attached", text: "g*l" });
  });

  it("survives a replica rebuilt from the stored update (compaction)", () => {
    const { a, ta } = replicas(lagrangian);
    const anchor = createTextAnchor(ta, 0, 3);
    ta.insert(0, "L = ");
    const compacted = new Y.Doc();
    Y.applyUpdate(compacted, Y.mergeUpdates([Y.encodeStateAsUpdate(a)]));
    expect(resolveTextAnchor(compacted, compacted.getText("expr"), anchor)).toMatchObject({ state: "attached", text: "1/2" });
  });

  it("is detached when resolved against another field or damaged bytes", () => {
    const { a, ta } = replicas(lagrangian);
    const other = a.getText("markdown");
    other.insert(0, "note");
    const anchor = createTextAnchor(ta, 0, 3);
    expect(resolveTextAnchor(a, other, anchor)).toEqual({ state: "detached", reason: "missing" });
    expect(resolveTextAnchor(a, null, anchor)).toEqual({ state: "detached", reason: "missing" });
    expect(resolveTextAnchor(a, ta, { start: new Uint8Array([255, 1]), end: anchor.end })).toEqual({ state: "detached", reason: "missing" });
  });

  it("refuses a span outside the text", () => {
    const { ta } = replicas("m*x");
    expect(() => createTextAnchor(ta, 2, 5)).toThrow(RangeError);
    expect(() => createTextAnchor(ta, 0, 0)).toThrow(RangeError);
  });
});
