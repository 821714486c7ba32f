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

for (const suite of ["unit", "integration"]) {
  const report = read(`vitest-${suite}.json`);
  if (!report) {
    failed += 1;
    notes.push(`vitest ${suite}: no report`);
    continue;
  }
  // A file that fails to load has no failed test of its own; count it once.
  const brokenFiles = (report.testResults ?? []).filter(
    (file) => file.status === "failed" && !(file.assertionResults ?? []).some((test) => test.status === "failed"),
  ).length;
  passed += report.numPassedTests ?? 0;
  failed += (report.numFailedTests ?? 0) + brokenFiles;
  notes.push(`vitest ${suite}: ${report.numPassedTests} passed, ${report.numFailedTests}${brokenFiles ? ` + ${brokenFiles} files` : ""} failed`);
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

// Static checks (typecheck, lint) leave no report: each failed one counts once.
for (const step of failedSteps.filter((name) => ["typecheck", "lint"].includes(name))) {
  failed += 1;
  notes.push(`${step}: failed`);
}

console.error(`[holonomy] ${notes.join("; ")}`);
console.log(`${passed} passed, ${failed} failed`);
process.exit(failed > 0 ? 1 : 0);
