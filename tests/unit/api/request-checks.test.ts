import { describe, expect, it } from "vitest";
import { assertJsonContentType, assertSameOrigin, isJsonContentType } from "@/lib/api/request-checks";
import { AppError } from "@/lib/errors";

const app = "https://holonomy.example";

function request(method: string, headers: Record<string, string> = {}): Request {
  return new Request(`${app}/api/teams/x/derivations`, { method, headers });
}

function refusal(run: () => void): string | null {
  try {
    run();
    return null;
  } catch (error) {
    return error instanceof AppError ? `${error.status} ${error.code}` : String(error);
  }
}

describe("assertSameOrigin", () => {
  it("lets reads through whatever their origin", () => {
    for (const method of ["GET", "HEAD", "OPTIONS"])
      expect(refusal(() => assertSameOrigin(request(method, { origin: "https://attacker.example" })))).toBeNull();
  });

  it("refuses a state-changing request from another site, an opaque origin or a foreign referer", () => {
    for (const method of ["POST", "PUT", "PATCH", "DELETE"]) {
      expect(refusal(() => assertSameOrigin(request(method, { origin: "https://attacker.example" })))).toBe("403 forbidden:origin");
    }
    expect(refusal(() => assertSameOrigin(request("POST", { origin: "null" })))).toBe("403 forbidden:origin");
    // Same host on another scheme or port is another origin.
    expect(refusal(() => assertSameOrigin(request("POST", { origin: "http://holonomy.example" })))).toBe("403 forbidden:origin");
    expect(refusal(() => assertSameOrigin(request("POST", { origin: "https://holonomy.example:8443" })))).toBe("403 forbidden:origin");
    expect(refusal(() => assertSameOrigin(request("POST", { referer: "https://attacker.example/form.html" })))).toBe("403 forbidden:origin");
    // A foreign Origin wins over a same-site Referer.
    expect(refusal(() => assertSameOrigin(request("POST", { origin: "https://attacker.example", referer: `${app}/teams` })))).toBe("403 forbidden:origin");
  });

  it("accepts the app's own origin, a same-site referer, and requests without either (not from a browser page)", () => {
    expect(refusal(() => assertSameOrigin(request("POST", { origin: app })))).toBeNull();
    expect(refusal(() => assertSameOrigin(request("POST", { referer: `${app}/derivations/1` })))).toBeNull();
    expect(refusal(() => assertSameOrigin(request("POST")))).toBeNull();
  });

  it("exempts bearer-token requests, which a foreign page cannot send without a preflight", () => {
    expect(refusal(() => assertSameOrigin(request("POST", { origin: "https://ci.example", authorization: "Bearer hlnm_abc" })))).toBeNull();
    expect(refusal(() => assertSameOrigin(request("POST", { origin: "https://ci.example", authorization: "Basic abc" })))).toBe("403 forbidden:origin");
  });
});

describe("JSON content types", () => {
  it("recognises application/json and the +json family, with parameters", () => {
    expect(isJsonContentType("application/json")).toBe(true);
    expect(isJsonContentType("Application/JSON; charset=utf-8")).toBe(true);
    expect(isJsonContentType("application/merge-patch+json")).toBe(true);
    for (const other of ["text/plain", "text/plain; charset=application/json", "application/x-www-form-urlencoded", "multipart/form-data; boundary=x", ""]) {
      expect(isJsonContentType(other)).toBe(false);
    }
    expect(isJsonContentType(null)).toBe(false);
  });

  it("refuses a body that is not declared as JSON with 415", () => {
    expect(refusal(() => assertJsonContentType(request("POST", { "content-type": "text/plain" })))).toBe("415 unsupported_media_type:api");
    expect(refusal(() => assertJsonContentType(request("POST", { "content-type": "application/json" })))).toBeNull();
  });
});
