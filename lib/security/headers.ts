// The response headers that keep pages from being framed, scripted or sniffed.
// Pure functions of their inputs: proxy.ts calls them per request with a fresh
// nonce, tests call them directly.

export interface PolicyOptions {
  /** A fresh random value per response; Next.js puts it on its own scripts. */
  nonce: string;
  /** Next's development server needs eval for React's debugging aids; a production build does not. */
  development: boolean;
  /** The app's own URL (NEXTAUTH_URL): https turns on upgrade-insecure-requests and HSTS. */
  appUrl: string;
  /** Further origins pages may connect to (the collaboration server's wss:// origin in production). */
  connectSources?: readonly string[];
}

function isLoopback(url: URL): boolean {
  return url.hostname === "localhost" || url.hostname === "127.0.0.1" || url.hostname === "[::1]";
}

/**
 * The Content-Security-Policy of a page. Scripts run only with the response's
 * nonce, or when a nonced script loaded them ('strict-dynamic'); no eval in
 * production (no 'unsafe-eval'). 'wasm-unsafe-eval' lets the simulation worker
 * compile the WebAssembly module it generates from a model's expression trees
 * (lib/mechanics/wasm); it permits WebAssembly compilation only, not eval or
 * new Function. Style elements need the nonce too; style attributes are allowed
 * because KaTeX positions every glyph with one (they cannot run script).
 * Workers come from this origin (the simulation worker). Nothing may frame a page.
 *
 * @example contentSecurityPolicy({ nonce: "abc", development: false, appUrl: "https://holonomy.example" })
 */
export function contentSecurityPolicy({ nonce, development, appUrl, connectSources = [] }: PolicyOptions): string {
  const app = new URL(appUrl);
  // Locally the collaboration server listens on its own loopback port.
  const localSockets = isLoopback(app) ? ["ws://localhost:*", "ws://127.0.0.1:*"] : [];
  const directives: Array<[string, ...string[]]> = [
    ["default-src", "'self'"],
    ["script-src", "'self'", `'nonce-${nonce}'`, "'strict-dynamic'", "'wasm-unsafe-eval'", ...(development ? ["'unsafe-eval'"] : [])],
    ["style-src", "'self'", `'nonce-${nonce}'`],
    ["style-src-attr", "'unsafe-inline'"],
    ["img-src", "'self'", "blob:", "data:"],
    ["font-src", "'self'", "data:"],
    ["connect-src", "'self'", ...localSockets, ...connectSources],
    ["worker-src", "'self'", "blob:"],
    ["manifest-src", "'self'"],
    ["object-src", "'none'"],
    ["base-uri", "'self'"],
    ["form-action", "'self'"],
    ["frame-src", "'none'"],
    ["frame-ancestors", "'none'"],
  ];
  if (app.protocol === "https:") directives.push(["upgrade-insecure-requests"]);
  return directives.map((parts) => parts.join(" ")).join("; ");
}

/** Headers for every response, pages and API alike (the policy itself comes from contentSecurityPolicy). */
export function securityHeaders(appUrl: string): Record<string, string> {
  const headers: Record<string, string> = {
    "X-Content-Type-Options": "nosniff",
    // Older browsers that ignore frame-ancestors.
    "X-Frame-Options": "DENY",
    // Derivation ids and team ids are in paths: never send them to another site.
    "Referrer-Policy": "same-origin",
    "Permissions-Policy": "camera=(), microphone=(), geolocation=(), payment=(), usb=(), interest-cohort=()",
    "Cross-Origin-Opener-Policy": "same-origin",
    "Cross-Origin-Resource-Policy": "same-origin",
  };
  if (new URL(appUrl).protocol === "https:") headers["Strict-Transport-Security"] = "max-age=31536000; includeSubDomains";
  return headers;
}

/** A random nonce (128 bits, base64), fresh for each response. */
export function createNonce(): string {
  const bytes = new Uint8Array(16);
  crypto.getRandomValues(bytes);
  return btoa(String.fromCharCode(...bytes));
}
