import { randomUUID } from "node:crypto";
import { describe, expect, it } from "vitest";
import { signCollabToken } from "@/lib/collab/token";
import { createTokenAuthenticator } from "@/server/collab/auth";
import { CloseCode, RefusedConnection } from "@/server/collab/types";

const secret = "collab-auth-test-secret-0123456789abcdef";

async function tokenFor(userId: string, derivationId: string): Promise<string> {
  return (await signCollabToken({ userId, derivationId }, { secret, ttlSeconds: 60 })).token;
}

describe("collaboration connections: admission by rate limit", () => {
  it("asks the admission check with the token's user and the client address, and refuses with 4429 and a wait", async () => {
    const asked: { userId: string; address: string | null }[] = [];
    const auth = createTokenAuthenticator({
      secret,
      admit: async (who) => {
        asked.push(who);
        return { allowed: false, retryAfterSeconds: 42 };
      },
    });
    const userId = randomUUID();
    const room = randomUUID();
    const refusal = await auth.authenticate(await tokenFor(userId, room), room, "127.0.0.1").catch((error: unknown) => error);
    expect(refusal).toBeInstanceOf(RefusedConnection);
    expect((refusal as RefusedConnection).code).toBe(CloseCode.tooMany);
    expect((refusal as RefusedConnection).reason).toContain("42 s");
    expect(asked).toEqual([{ userId, address: "127.0.0.1" }]);
  });

  it("does not count a connection whose token is refused", async () => {
    let asked = 0;
    const auth = createTokenAuthenticator({
      secret,
      admit: async () => {
        asked += 1;
        return { allowed: true };
      },
    });
    const room = randomUUID();
    const refusal = await auth.authenticate("not-a-token", room, "127.0.0.1").catch((error: unknown) => error);
    expect((refusal as RefusedConnection).code).toBe(CloseCode.badToken);
    expect(asked).toBe(0);
  });
});
