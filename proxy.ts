import { NextResponse, type NextRequest } from "next/server";

// Passes the requested path to server components, so a sign-in redirect can
// bring the reader back to the page they asked for.
export function proxy(request: NextRequest) {
  const requestHeaders = new Headers(request.headers);
  requestHeaders.set("x-holonomy-path", `${request.nextUrl.pathname}${request.nextUrl.search}`);
  return NextResponse.next({ request: { headers: requestHeaders } });
}

export const config = {
  matcher: ["/teams/:path*", "/derivations/:path*"],
};
