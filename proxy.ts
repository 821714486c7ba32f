import { NextResponse, type NextRequest } from "next/server";
import { env } from "@/lib/env";
import { contentSecurityPolicy, createNonce, securityHeaders } from "@/lib/security/headers";

// Runs before every page and route (not static files). Pages get a
// Content-Security-Policy with a fresh nonce: Next.js reads it from the request
// headers and puts it on its own scripts, the root layout on its theme script.
// API answers get a policy that allows nothing, since they are never pages.
// The requested path goes to server components too, so a sign-in redirect can
// bring the reader back to the page they asked for.
// The browser opens its co-editing websocket to the collaboration server's public address.
const collabOrigin = new URL(env.COLLAB_PUBLIC_URL).origin;

export function proxy(request: NextRequest) {
  const isApi = request.nextUrl.pathname.startsWith("/api/");
  const nonce = createNonce();
  const policy = isApi
    ? "default-src 'none'; frame-ancestors 'none'"
    : contentSecurityPolicy({
        nonce,
        development: env.NODE_ENV === "development",
        appUrl: env.NEXTAUTH_URL,
        connectSources: [...env.CSP_CONNECT_SRC, collabOrigin],
      });

  const requestHeaders = new Headers(request.headers);
  requestHeaders.set("x-holonomy-path", `${request.nextUrl.pathname}${request.nextUrl.search}`);
  if (!isApi) {
    requestHeaders.set("x-nonce", nonce);
    requestHeaders.set("content-security-policy", policy);
  }
  const response = NextResponse.next({ request: { headers: requestHeaders } });
  response.headers.set("content-security-policy", policy);
  for (const [name, value] of Object.entries(securityHeaders(env.NEXTAUTH_URL))) response.headers.set(name, value);
  return response;
}

export const config = {
  matcher: ["/((?!_next/static|_next/image|favicon.ico).*)"],
};
