import { describe, expect, it } from "vitest";
import { DEVELOPMENT_NEXTAUTH_SECRET, parseEnv } from "@/lib/env";

const productionSecret = "k3Vq9xW2mZ7pR4tY8nB1cD6fG0hJ5sL2aQ9wE3rT7yU";

describe("parseEnv: NEXTAUTH_SECRET", () => {
  it("falls back to the development secret outside production", () => {
    expect(parseEnv({ NODE_ENV: "development" }).NEXTAUTH_SECRET).toBe(DEVELOPMENT_NEXTAUTH_SECRET);
    expect(parseEnv({ NODE_ENV: "test" }).NEXTAUTH_SECRET).toBe(DEVELOPMENT_NEXTAUTH_SECRET);
  });

  it("refuses a production server without a secret", () => {
    expect(() => parseEnv({ NODE_ENV: "production" })).toThrow(/NEXTAUTH_SECRET: not set/);
  });

  it("refuses the committed development secret in production", () => {
    expect(() => parseEnv({ NODE_ENV: "production", NEXTAUTH_SECRET: DEVELOPMENT_NEXTAUTH_SECRET })).toThrow(
      /development secret must not be used in production/,
    );
  });

  it("refuses a short secret in production", () => {
    expect(() => parseEnv({ NODE_ENV: "production", NEXTAUTH_SECRET: "sixteen-chars-xx" })).toThrow(/too short/);
  });

  it("accepts a random secret in production", () => {
    expect(parseEnv({ NODE_ENV: "production", NEXTAUTH_SECRET: productionSecret }).NEXTAUTH_SECRET).toBe(productionSecret);
  });

  it("lets `next build` through without a secret (it signs nothing)", () => {
    const built = parseEnv({ NODE_ENV: "production", NEXT_PHASE: "phase-production-build" });
    expect(built.NEXTAUTH_SECRET).toBe(DEVELOPMENT_NEXTAUTH_SECRET);
  });
});

describe("parseEnv: security settings", () => {
  it("reads extra connect-src origins as a list and refuses anything that is not an origin", () => {
    expect(parseEnv({}).CSP_CONNECT_SRC).toEqual([]);
    expect(parseEnv({ CSP_CONNECT_SRC: " wss://collab.kestrel.example  https://status.kestrel.example " }).CSP_CONNECT_SRC).toEqual([
      "wss://collab.kestrel.example",
      "https://status.kestrel.example",
    ]);
    // A quote or semicolon would let a setting add directives of its own.
    expect(() => parseEnv({ CSP_CONNECT_SRC: "wss://x.example; script-src *" })).toThrow(/CSP_CONNECT_SRC/);
    expect(() => parseEnv({ CSP_CONNECT_SRC: "'unsafe-eval'" })).toThrow(/CSP_CONNECT_SRC/);
  });

  it("scales rate limits by a positive multiplier, 1 by default", () => {
    expect(parseEnv({}).RATE_LIMIT_MULTIPLIER).toBe(1);
    expect(parseEnv({ RATE_LIMIT_MULTIPLIER: "1000" }).RATE_LIMIT_MULTIPLIER).toBe(1000);
    expect(() => parseEnv({ RATE_LIMIT_MULTIPLIER: "0" })).toThrow(/RATE_LIMIT_MULTIPLIER/);
  });
});

describe("parseEnv: the collaboration server", () => {
  it("defaults to loopback port 3001 and derives the public address from the port", () => {
    const env = parseEnv({ NODE_ENV: "test" });
    expect(env.COLLAB_PORT).toBe(3001);
    expect(env.COLLAB_PUBLIC_URL).toBe("ws://127.0.0.1:3001/collab");
    expect(parseEnv({ NODE_ENV: "test", COLLAB_PORT: "4123" }).COLLAB_PUBLIC_URL).toBe("ws://127.0.0.1:4123/collab");
  });

  it("takes a public websocket address and refuses any other scheme", () => {
    expect(parseEnv({ NODE_ENV: "test", COLLAB_PUBLIC_URL: "wss://holonomy.example.com/collab/" }).COLLAB_PUBLIC_URL).toBe("wss://holonomy.example.com/collab");
    expect(() => parseEnv({ NODE_ENV: "test", COLLAB_PUBLIC_URL: "https://holonomy.example.com/collab" })).toThrow(/COLLAB_PUBLIC_URL/);
  });
});
