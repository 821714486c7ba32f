// Reads the vitest and Playwright JSON reports and prints "N passed, N failed".
// A suite whose report is missing (it crashed or never ran) counts as one failure,
// and so does every failed step named on the command line that left no report.
// Usage: node summarise-tests.mjs REPORT_DIR [failed step ...]
import { existsSync, readFileSync } from "node:fs";
import path from "node:path";

const [reportDir, ...failedSteps] = process.argv.slice(2);
let passed = 0;
let failed = 0;
const notes = [];

function read(name) {
  const file = path.join(reportDir, name);
  if (!existsSync(file)) return null;
  try {
    return JSON.parse(readFileSync(file, "utf8"));
  } catch {
    return null;
  }
}

const vitest = read("vitest.json");
if (vitest) {
  passed += vitest.numPassedTests ?? 0;
  failed += (vitest.numFailedTests ?? 0) + (vitest.numFailedTestSuites ?? 0) - countSuitesWithFailedTests(vitest);
  notes.push(`vitest: ${vitest.numPassedTests} passed, ${vitest.numFailedTests} failed`);
} else {
  failed += 1;
  notes.push("vitest: no report");
}

// A file that fails to load counts as a failed suite with no failed test; count it once.
function countSuitesWithFailedTests(report) {
  return (report.testResults ?? []).filter(
    (suite) => suite.status === "failed" && (suite.assertionResults ?? []).some((t) => t.status === "failed"),
  ).length;
}

const playwright = read("playwright.json");
if (playwright) {
  const stats = playwright.stats ?? {};
  passed += (stats.expected ?? 0) + (stats.flaky ?? 0);
  failed += stats.unexpected ?? 0;
  const loadErrors = (playwright.errors ?? []).length;
  failed += loadErrors;
  notes.push(`playwright: ${(stats.expected ?? 0) + (stats.flaky ?? 0)} passed, ${stats.unexpected ?? 0} failed${loadErrors ? `, ${loadErrors} errors` : ""}`);
} else {
  failed += 1;
  notes.push(failedSteps.includes("next build") ? "playwright: not run (build failed)" : "playwright: no report");
}

console.error(`[holonomy] ${notes.join("; ")}`);
console.log(`${passed} passed, ${failed} failed`);
process.exit(failed > 0 ? 1 : 0);
