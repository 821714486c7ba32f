// What a request's headers say about where it came from. The server binds to
// 127.0.0.1, so requests come from this machine or through a reverse proxy on it.
// Next.js fills x-forwarded-for with the connection's address and x-forwarded-host
// with the Host header when nothing upstream set them.

type HeaderSource = Headers | Record<string, string | string[] | undefined>;

function header(source: HeaderSource, name: string): string | undefined {
  if (source instanceof Headers) return source.get(name) ?? undefined;
  const value = source[name];
  return Array.isArray(value) ? value.join(",") : value;
}

function normaliseAddress(address: string): string {
  const trimmed = address.trim().toLowerCase();
  // IPv4 clients of a dual-stack socket appear as ::ffff:a.b.c.d.
  return trimmed.startsWith("::ffff:") && trimmed.includes(".") ? trimmed.slice(7) : trimmed;
}

function forwardedFor(source: HeaderSource): string[] {
  return (header(source, "x-forwarded-for") ?? "")
    .split(",")
    .map(normaliseAddress)
    .filter((hop) => hop !== "");
}

/**
 * The client's address for rate limiting, or null when the request carries none
 * (route handlers called directly, as in tests). Takes the right-most
 * x-forwarded-for entry: the one written by the hop next to the app (Next.js
 * itself, or the reverse proxy in front of it). Entries further left are whatever
 * the client sent and cannot be trusted.
 *
 * @example clientAddress(new Headers({ "x-forwarded-for": "203.0.113.9, 198.51.100.4" })) // "198.51.100.4"
 */
export function clientAddress(source: HeaderSource): string | null {
  const hops = forwardedFor(source);
  const nearest = hops.at(-1);
  if (nearest !== undefined) return nearest;
  const real = header(source, "x-real-ip");
  return real ? normaliseAddress(real) : null;
}

const loopbackHosts = new Set(["localhost", "127.0.0.1", "[::1]", "::1"]);

function hostName(host: string): string {
  const trimmed = host.trim().toLowerCase();
  if (trimmed.startsWith("[")) return trimmed.slice(0, trimmed.indexOf("]") + 1);
  return trimmed.split(":")[0] ?? trimmed;
}

function isLoopbackAddress(address: string): boolean {
  return address === "::1" || /^127\.\d{1,3}\.\d{1,3}\.\d{1,3}$/.test(address);
}

/**
 * True when the request was addressed to localhost / 127.0.0.1 and every
 * forwarding hop is this machine: the development mailbox, which shows sign-in
 * links, is served to nothing else, even when a proxy makes the app public.
 */
export function isLoopbackRequest(source: HeaderSource): boolean {
  const hosts = [header(source, "host"), ...(header(source, "x-forwarded-host") ?? "").split(",")]
    .filter((host): host is string => host !== undefined && host.trim() !== "")
    .map(hostName);
  if (hosts.length === 0 || !hosts.every((host) => loopbackHosts.has(host))) return false;
  return forwardedFor(source).every(isLoopbackAddress);
}
