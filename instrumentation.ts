// Runs once when the server starts: validating the environment here makes a
// misconfigured production server (e.g. without its own NEXTAUTH_SECRET) stop at
// start-up instead of failing on its first request.
export async function register() {
  // NEXT_RUNTIME is set by Next.js itself, not configuration; lib/env.ts is for the Node.js server.
  // eslint-disable-next-line no-restricted-properties
  if (process.env.NEXT_RUNTIME === "nodejs") await import("./lib/env");
}
