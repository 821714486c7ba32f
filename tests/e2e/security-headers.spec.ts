import { expect, test } from "@playwright/test";

// next.config.mjs adds these to every response: no framing (clickjacking), no MIME
// sniffing, and only the origin in the Referer sent to other sites.
for (const path of ["/sign-in", "/api/health"]) {
  test(`security headers on ${path}`, async ({ request }) => {
    const response = await request.get(path);
    expect(response.ok()).toBe(true);
    const headers = response.headers();
    expect(headers["x-frame-options"]).toBe("DENY");
    expect(headers["content-security-policy"]).toBe("frame-ancestors 'none'");
    expect(headers["x-content-type-options"]).toBe("nosniff");
    expect(headers["referrer-policy"]).toBe("strict-origin-when-cross-origin");
  });
}
