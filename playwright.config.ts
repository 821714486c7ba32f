import { defineConfig } from "@playwright/test";

// Browser suite: Debian's chromium (never a downloaded browser) against a
// production build served by `next start`. scripts/test.sh builds the app,
// prepares the test database and mail fake, and exports their settings.
// This file reads process.env itself rather than lib/env.ts: its only setting is
// the test runner's own port, which the app never reads, and importing lib/env.ts
// would copy the app's development defaults (NEXTAUTH_SECRET among them) into the
// environment of the production server started below.
const port = Number(process.env.HOLONOMY_TEST_APP_PORT ?? 3100);
// The collaboration server beside it (server/collab.ts); the app's token route names its address.
const collabPort = Number(process.env.HOLONOMY_TEST_COLLAB_PORT ?? 3101);

export default defineConfig({
  testDir: "tests/e2e",
  outputDir: ".data/e2e-results",
  timeout: 60_000,
  expect: { timeout: 10_000 },
  fullyParallel: false,
  workers: 1,
  retries: 0,
  forbidOnly: true,
  reporter: [["list"], ["json", { outputFile: ".data/reports/playwright.json" }]],
  use: {
    baseURL: `http://localhost:${port}`,
    screenshot: "only-on-failure",
    trace: "off",
    launchOptions: {
      executablePath: "/usr/bin/chromium",
      args: [
        "--headless",
        "--no-sandbox",
        "--disable-gpu",
        "--disable-background-networking",
        "--disable-component-update",
        "--disable-sync",
        "--no-first-run",
      ],
    },
  },
  projects: [{ name: "chromium", use: { browserName: "chromium" } }],
  webServer: {
    // The app with its collaboration server and one queue worker (scripts/start.sh waits for
    // the collaboration server before it starts the app).
    command: `bash scripts/start.sh ${port}`,
    url: `http://127.0.0.1:${port}/api/health`,
    env: { COLLAB_PORT: String(collabPort) },
    reuseExistingServer: false,
    timeout: 120_000,
    stdout: "ignore",
    stderr: "pipe",
  },
});
