import { describe, expect, it } from "vitest";
import { diffCounts, textDiff } from "@/lib/history/text-diff";

describe("textDiff", () => {
  it("keeps identical text as unchanged lines", () => {
    expect(textDiff("a\nb", "a\nb")).toEqual([
      { kind: "same", text: "a" },
      { kind: "same", text: "b" },
    ]);
  });

  it("puts a replaced line's removal before its replacement and marks the changed words", () => {
    const lines = textDiff("T = m*v^2", "T = 1/2*m*v^2");
    expect(lines.map((line) => line.kind)).toEqual(["removed", "added"]);
    const added = lines[1]!;
    expect(
      added.kind === "added" &&
        added.parts
          ?.filter((part) => part.changed)
          .map((part) => part.text)
          .join(""),
    ).toBe("1/2*");
    const removed = lines[0]!;
    // Nothing of the old line is gone, so no word of it is marked.
    expect(removed.kind === "removed" && removed.parts?.some((part) => part.changed)).toBe(false);
    // Each side's parts spell its whole line.
    expect(removed.kind === "removed" && removed.parts?.map((part) => part.text).join("")).toBe("T = m*v^2");
    expect(added.kind === "added" && added.parts?.map((part) => part.text).join("")).toBe("T = 1/2*m*v^2");
  });

  it("shows lines added and removed around unchanged ones", () => {
    const lines = textDiff("x [m]\ntheta [rad]", "x [m]\ntheta [rad]\nphi [rad]");
    expect(lines).toEqual([
      { kind: "same", text: "x [m]" },
      { kind: "same", text: "theta [rad]" },
      { kind: "added", text: "phi [rad]" },
    ]);
    expect(diffCounts(lines)).toEqual({ added: 1, removed: 0 });
  });

  it("pairs replaced blocks line by line and lists the extra lines plainly", () => {
    const lines = textDiff("keep\nold one\nold two\nend", "keep\nnew one\nend");
    expect(lines.map((line) => `${line.kind}:${line.text}`)).toEqual(["same:keep", "removed:old one", "removed:old two", "added:new one", "same:end"]);
    expect(lines[1]).toHaveProperty("parts");
    expect(lines[2]).not.toHaveProperty("parts");
  });

  it("diffs from and to empty text", () => {
    expect(textDiff("", "a")).toEqual([{ kind: "added", text: "a" }]);
    expect(textDiff("a\nb", "")).toEqual([
      { kind: "removed", text: "a" },
      { kind: "removed", text: "b" },
    ]);
  });
});
