import { describe, expect, it } from "vitest";
import { clientAddress, isLoopbackRequest } from "@/lib/client-address";

describe("clientAddress", () => {
  it("takes the right-most x-forwarded-for hop, the one the app's own proxy wrote", () => {
    expect(clientAddress(new Headers({ "x-forwarded-for": "203.0.113.9, 198.51.100.4" }))).toBe("198.51.100.4");
    expect(clientAddress({ "x-forwarded-for": "198.51.100.4" })).toBe("198.51.100.4");
  });

  it("unwraps IPv4-mapped IPv6 and falls back to x-real-ip, else null", () => {
    expect(clientAddress(new Headers({ "x-forwarded-for": "::ffff:127.0.0.1" }))).toBe("127.0.0.1");
    expect(clientAddress(new Headers({ "x-real-ip": "192.0.2.7" }))).toBe("192.0.2.7");
    expect(clientAddress(new Headers())).toBeNull();
  });
});

describe("isLoopbackRequest", () => {
  it("accepts localhost and 127.0.0.1 from this machine", () => {
    expect(isLoopbackRequest(new Headers({ host: "localhost:3000", "x-forwarded-for": "127.0.0.1" }))).toBe(true);
    expect(isLoopbackRequest(new Headers({ host: "127.0.0.1:3100", "x-forwarded-host": "127.0.0.1:3100", "x-forwarded-for": "::ffff:127.0.0.1" }))).toBe(true);
    expect(isLoopbackRequest(new Headers({ host: "[::1]:3000", "x-forwarded-for": "::1" }))).toBe(true);
  });

  it("refuses another host name, even when only a proxy's forwarded host says so", () => {
    expect(isLoopbackRequest(new Headers({ host: "holonomy.example.test" }))).toBe(false);
    expect(isLoopbackRequest(new Headers({ host: "localhost:3000", "x-forwarded-host": "holonomy.example.test" }))).toBe(false);
    expect(isLoopbackRequest(new Headers({ host: "localhost.example.test" }))).toBe(false);
    expect(isLoopbackRequest(new Headers())).toBe(false);
  });

  it("refuses a request forwarded for a remote client", () => {
    expect(isLoopbackRequest(new Headers({ host: "localhost:3000", "x-forwarded-for": "203.0.113.9, 127.0.0.1" }))).toBe(false);
  });
});
