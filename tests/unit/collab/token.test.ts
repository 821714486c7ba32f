import { describe, expect, it } from "vitest";
import { CollabTokenError, presenceColour, signCollabToken, verifyCollabToken } from "@/lib/collab/token";

const secret = "a-test-secret-of-enough-length";
const claims = { userId: "9b2f4c1e-0000-4000-8000-000000000001", derivationId: "9b2f4c1e-0000-4000-8000-000000000002" };

describe("connection tokens", () => {
  it("carry the user and the derivation and expire after their lifetime", async () => {
    const now = new Date("2026-12-02T12:00:00Z");
    const { token, expiresAt } = await signCollabToken(claims, { secret, ttlSeconds: 120, now });
    expect(expiresAt.toISOString()).toBe("2026-12-02T12:02:00.000Z");
    expect(await verifyCollabToken(token, { secret, now: new Date("2026-12-02T12:01:59Z") })).toEqual(claims);
    await expect(verifyCollabToken(token, { secret, now: new Date("2026-12-02T12:02:01Z") })).rejects.toMatchObject({ reason: "expired" });
  });

  it("refuse another secret, a changed payload and garbage", async () => {
    const { token } = await signCollabToken(claims, { secret, ttlSeconds: 120 });
    await expect(verifyCollabToken(token, { secret: `${secret}!` })).rejects.toMatchObject({ reason: "invalid" });
    const [header, payload, signature] = token.split(".");
    const forged = JSON.parse(Buffer.from(payload!, "base64url").toString());
    forged.drv = "9b2f4c1e-0000-4000-8000-000000000003";
    await expect(verifyCollabToken(`${header}.${Buffer.from(JSON.stringify(forged)).toString("base64url")}.${signature}`, { secret })).rejects.toBeInstanceOf(
      CollabTokenError,
    );
    await expect(verifyCollabToken("not.a.token", { secret })).rejects.toMatchObject({ reason: "invalid" });
  });

  it("give each person one stable presence colour", () => {
    expect(presenceColour(claims.userId)).toBe(presenceColour(claims.userId));
    expect(presenceColour(claims.userId)).toMatch(/^#[0-9a-f]{6}$/);
  });
});
