import "server-only";
import { env } from "@/lib/env";
import { AppError } from "@/lib/errors";

// Cross-site request forgery: a page on another site can make the browser send
// a POST that carries the session cookie. SameSite cookies stop that in
// current browsers; these checks make the server refuse it by itself.
//
// 1. A state-changing request (anything but GET, HEAD, OPTIONS) must come from
//    this site: its Origin header, or without one its Referer, names the app's
//    own origin. A request with neither is not from a browser page (scripts,
//    curl, server-to-server) and carries no ambient credentials of a victim,
//    so it passes. A request with `Authorization: Bearer …` (the public API)
//    is exempt: a foreign page cannot attach that header without a CORS
//    preflight, which the app never grants.
// 2. A JSON route reads its body only when Content-Type says JSON: an HTML form
//    can send text/plain cross-site without a preflight, a JSON content type
//    it cannot.

const SAFE_METHODS = new Set(["GET", "HEAD", "OPTIONS"]);

/** The origins this app answers on: its configured URL, and the origin the request was addressed to. */
export function ownOrigins(request: Request): Set<string> {
  const origins = new Set<string>([new URL(env.NEXTAUTH_URL).origin]);
  try {
    origins.add(new URL(request.url).origin);
  } catch {
    // A relative or malformed URL adds nothing.
  }
  return origins;
}

function originOf(value: string): string | null {
  try {
    return new URL(value).origin;
  } catch {
    return null;
  }
}

function isBearerRequest(request: Request): boolean {
  return /^Bearer\s/i.test(request.headers.get("authorization") ?? "");
}

/**
 * Throws `forbidden:origin` (403) for a state-changing request sent from another
 * site: a foreign (or opaque "null") Origin, or no Origin and a foreign Referer.
 *
 * @example assertSameOrigin(new Request("https://app.test/x", { method: "POST", headers: { origin: "https://evil.test" } })) // throws
 */
export function assertSameOrigin(request: Request): void {
  if (SAFE_METHODS.has(request.method.toUpperCase()) || isBearerRequest(request)) return;
  const allowed = ownOrigins(request);
  const origin = request.headers.get("origin");
  if (origin !== null) {
    if (allowed.has(originOf(origin) ?? "")) return;
    throw new AppError("forbidden:origin", "This request came from another site and was refused.");
  }
  const referer = request.headers.get("referer");
  if (referer !== null && referer !== "" && !allowed.has(originOf(referer) ?? "")) {
    throw new AppError("forbidden:origin", "This request came from another site and was refused.");
  }
}

/** True for application/json and the application/*+json family (parameters such as charset allowed). */
export function isJsonContentType(value: string | null): boolean {
  if (value === null) return false;
  const type = value.split(";")[0]!.trim().toLowerCase();
  return type === "application/json" || /^application\/[a-z0-9.+-]+\+json$/.test(type);
}

/** Throws `unsupported_media_type:api` (415) unless the request declares a JSON body. */
export function assertJsonContentType(request: Request): void {
  if (!isJsonContentType(request.headers.get("content-type"))) {
    throw new AppError("unsupported_media_type:api", "Send the body as JSON with `Content-Type: application/json`.");
  }
}
