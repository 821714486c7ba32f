import { afterEach, describe, expect, it, vi } from "vitest";

// next-auth derives every cookie's Secure flag and __Secure-/__Host- prefix from
// useSecureCookies (its cookies are always HttpOnly and SameSite=Lax); the flag
// must follow the app's own scheme, not a guess.
async function optionsFor(appUrl: string) {
  vi.resetModules();
  vi.stubEnv("NEXTAUTH_URL", appUrl);
  return import("@/lib/auth/options");
}

afterEach(() => {
  vi.unstubAllEnvs();
  vi.resetModules();
});

describe("auth cookies", () => {
  it("are Secure when the app is served over https", async () => {
    const { authOptions, secureCookies } = await optionsFor("https://holonomy.example");
    expect(secureCookies).toBe(true);
    expect(authOptions.useSecureCookies).toBe(true);
  });

  it("stay usable on a plain-http local address", async () => {
    const { authOptions } = await optionsFor("http://localhost:3000");
    expect(authOptions.useSecureCookies).toBe(false);
  });
});
