import { describe, expect, it } from "vitest";
import { contentSecurityPolicy, createNonce, securityHeaders } from "@/lib/security/headers";

function directives(policy: string): Map<string, string[]> {
  return new Map(
    policy.split(";").map((part) => {
      const [name, ...values] = part.trim().split(/\s+/);
      return [name!, values];
    }),
  );
}

describe("the Content-Security-Policy", () => {
  it("allows scripts only with the response's nonce, WebAssembly compilation but never eval in production", () => {
    const policy = directives(contentSecurityPolicy({ nonce: "bm9uY2U=", development: false, appUrl: "https://holonomy.example" }));
    expect(policy.get("script-src")).toEqual(["'self'", "'nonce-bm9uY2U='", "'strict-dynamic'", "'wasm-unsafe-eval'"]);
    // 'wasm-unsafe-eval' (the simulator's generated module) is the only eval-like source, and only in script-src.
    const text = contentSecurityPolicy({ nonce: "n", development: false, appUrl: "https://holonomy.example" });
    expect(text).not.toMatch(/'unsafe-eval'|unsafe-inline'\s*;?\s*$/);
    expect(text.match(/wasm-unsafe-eval/g)).toHaveLength(1);
    expect(policy.get("style-src")).toEqual(["'self'", "'nonce-bm9uY2U='"]);
    expect(policy.get("object-src")).toEqual(["'none'"]);
    expect(policy.get("base-uri")).toEqual(["'self'"]);
    expect(policy.get("form-action")).toEqual(["'self'"]);
    expect(policy.get("frame-ancestors")).toEqual(["'none'"]);
    expect(policy.has("upgrade-insecure-requests")).toBe(true);
    // Only the production collaboration origin that is configured, no loopback sockets.
    expect(policy.get("connect-src")).toEqual(["'self'"]);
  });

  it("adds eval for Next's development server only, and loopback sockets for a local app", () => {
    const policy = directives(contentSecurityPolicy({ nonce: "n", development: true, appUrl: "http://localhost:3000" }));
    expect(policy.get("script-src")).toContain("'unsafe-eval'");
    expect(policy.get("connect-src")).toEqual(["'self'", "ws://localhost:*", "ws://127.0.0.1:*"]);
    expect(policy.has("upgrade-insecure-requests")).toBe(false);
  });

  it("lets pages reach the configured collaboration origin", () => {
    const policy = directives(
      contentSecurityPolicy({ nonce: "n", development: false, appUrl: "https://holonomy.example", connectSources: ["wss://collab.holonomy.example"] }),
    );
    expect(policy.get("connect-src")).toEqual(["'self'", "wss://collab.holonomy.example"]);
  });
});

describe("security headers", () => {
  it("forbid framing and sniffing, keep referrers on this site, and add HSTS behind TLS", () => {
    const https = securityHeaders("https://holonomy.example");
    expect(https).toMatchObject({ "X-Content-Type-Options": "nosniff", "X-Frame-Options": "DENY", "Referrer-Policy": "same-origin" });
    expect(https["Strict-Transport-Security"]).toMatch(/^max-age=\d{7,}/);
    expect(securityHeaders("http://localhost:3000")["Strict-Transport-Security"]).toBeUndefined();
  });

  it("makes a fresh 128-bit nonce each time", () => {
    const nonces = new Set(Array.from({ length: 50 }, createNonce));
    expect(nonces.size).toBe(50);
    for (const nonce of nonces) expect(Buffer.from(nonce, "base64")).toHaveLength(16);
  });
});
