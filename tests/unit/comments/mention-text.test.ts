import { describe, expect, it } from "vitest";
import { fromEditable, mentionQueryAt, toEditable } from "@/components/comments/mention-text";
import { mentionToken, mentionsIn } from "@/lib/comments/mentions";

const ines = { name: "Ines Marlow", userId: "0b8c7e52-4a53-4f0e-9a3e-5a1f0f3b2c11" };
const inesLong = { name: "Ines Marlow-Reyes", userId: "6f1d2a34-77b9-4c2e-8d10-2b3c4d5e6f70" };

describe("the comment box's mentions", () => {
  it("shows stored mentions as @Name and stores them back unchanged", () => {
    const body = `${mentionToken(ines)} please check the rope stiffness.`;
    const editable = toEditable(body);
    expect(editable.text).toBe("@Ines Marlow please check the rope stiffness.");
    expect(fromEditable(editable.text, editable.picked)).toBe(body);
  });

  it("keeps two members whose names share a beginning apart", () => {
    const body = fromEditable("@Ines Marlow-Reyes and @Ines Marlow", [ines, inesLong]);
    expect(mentionsIn(body)).toEqual([inesLong, ines]);
  });

  it("drops a mention whose name was erased from the text", () => {
    expect(mentionsIn(fromEditable("never mind", [ines]))).toEqual([]);
  });

  it("finds the partial name typed after @ at the caret, not inside an address", () => {
    expect(mentionQueryAt("ask @In", 7)).toEqual({ start: 4, query: "In" });
    expect(mentionQueryAt("@", 1)).toEqual({ start: 0, query: "" });
    expect(mentionQueryAt("ops@kestrel", 11)).toBeNull();
  });
});
