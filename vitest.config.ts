import { defineConfig } from "vitest/config";
import path from "node:path";

// Unit tests run without services; integration tests need PostgreSQL and the
// fakes, which scripts/test.sh starts before calling vitest.
export default defineConfig({
  resolve: {
    alias: {
      "@": path.resolve(import.meta.dirname),
      // "server-only" throws outside a React Server Components bundle; tests run server code directly.
      "server-only": path.resolve(import.meta.dirname, "tests/support/server-only.ts"),
    },
  },
  test: {
    // The worker bundles are built once per run, before any test file (tests/support/build-workers.ts).
    globalSetup: ["tests/support/build-workers.ts"],
    projects: [
      {
        extends: true,
        // Component tests render KaTeX and CodeMirror under jsdom: on a busy 2-core machine some take
        // several seconds, so the per-test limit is wider than vitest's 5 s default.
        test: { name: "unit", include: ["tests/unit/**/*.test.ts", "tests/unit/**/*.test.tsx"], environment: "node", testTimeout: 20_000 },
      },
      {
        extends: true,
        test: {
          name: "integration",
          include: ["tests/integration/**/*.test.ts"],
          environment: "node",
          fileParallelism: false,
          testTimeout: 30000,
        },
      },
    ],
  },
});
