import type { IncomingMessage } from "node:http";
import { describe, expect, it } from "vitest";
import { connectionAddress } from "@/server/collab/server";

function request(remoteAddress: string | undefined, headers: Record<string, string> = {}): Pick<IncomingMessage, "headers" | "socket"> {
  return { headers, socket: { remoteAddress } as IncomingMessage["socket"] };
}

describe("connectionAddress", () => {
  it("counts a connection from the open network by its socket, whatever it claims", () => {
    expect(connectionAddress(request("203.0.113.9", { "x-forwarded-for": "198.51.100.4" }))).toBe("203.0.113.9");
    expect(connectionAddress(request("::ffff:203.0.113.9"))).toBe("203.0.113.9");
    expect(connectionAddress(request("2001:db8::5", { "x-forwarded-for": "198.51.100.4" }))).toBe("2001:db8::5");
  });

  it("believes the right-most forwarded entry from a proxy on this host or the private network", () => {
    expect(connectionAddress(request("127.0.0.1", { "x-forwarded-for": "192.0.2.1, 198.51.100.4" }))).toBe("198.51.100.4");
    expect(connectionAddress(request("::ffff:10.1.2.3", { "x-forwarded-for": "198.51.100.4" }))).toBe("198.51.100.4");
    expect(connectionAddress(request("172.20.0.5", { "x-forwarded-for": "2001:db8::7" }))).toBe("2001:db8::7");
    expect(connectionAddress(request("::1", { "x-forwarded-for": "198.51.100.4" }))).toBe("198.51.100.4");
  });

  it("falls back to the proxy's own address when it forwards nothing usable", () => {
    expect(connectionAddress(request("192.168.1.20"))).toBe("192.168.1.20");
    expect(connectionAddress(request("192.168.1.20", { "x-forwarded-for": "not-an-address" }))).toBe("192.168.1.20");
    expect(connectionAddress(request(undefined))).toBeNull();
  });
});
