// Runs once when the server starts: validating the environment here makes a
// misconfigured production server (e.g. without its own NEXTAUTH_SECRET) exit at
// start-up with the reason, instead of answering every request with an error.
export async function register() {
  // NEXT_RUNTIME is set by Next.js itself, not configuration; lib/env.ts is for the Node.js server.
  // eslint-disable-next-line no-restricted-properties
  if (process.env.NEXT_RUNTIME !== "nodejs") return;
  try {
    await import("./lib/env");
  } catch (error) {
    console.error(`[holonomy] ${error instanceof Error ? error.message : String(error)}`);
    process.exit(1);
  }
}
