import { describe, expect, it } from "vitest";
import { mentionToken, mentionsIn, withPlainMentions } from "@/lib/comments/mentions";

const ada = { name: "Ada Brandt", userId: "0b8c7e52-4a53-4f0e-9a3e-5a1f0f3b2c11" };
const ivo = { name: "Ivo Lenz", userId: "6f1d2a34-77b9-4c2e-8d10-2b3c4d5e6f70" };

describe("mentions", () => {
  it("finds each mentioned person once", () => {
    const body = `${mentionToken(ada)} please check the damping sign; ${mentionToken(ivo)} and ${mentionToken(ada)} agree?`;
    expect(mentionsIn(body)).toEqual([ada, ivo]);
    expect(withPlainMentions(body)).toBe("@Ada Brandt please check the damping sign; @Ivo Lenz and @Ada Brandt agree?");
  });

  it("ignores text that only looks like a mention", () => {
    expect(mentionsIn("mail ops@kestrel.example or @[Ada](not-an-id)")).toEqual([]);
  });
});
