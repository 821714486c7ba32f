import { z } from "zod";

// zod compiles object parsers with `new Function` when it can, and finds out by
// trying. In the browser, under the Content-Security-Policy (no eval), that try
// is blocked and reported as a violation; zod then parses without compiling
// anyway. Say so up front. The server has no such policy and keeps the faster path.
if (typeof window !== "undefined" || "WorkerGlobalScope" in globalThis) z.config({ jitless: true });
