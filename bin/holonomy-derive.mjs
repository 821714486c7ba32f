#!/usr/bin/env node
// The derivation CLI as a package binary. Runs the bundle that the start and test
// commands build (dist/cli/derive.cjs with V8's code cache beside it, see
// scripts/build-workers.sh), so a small model is answered well under 0.4 s; without
// the bundle, the TypeScript source through tsx (slower to start).
import { spawnSync } from "node:child_process";
import { existsSync, readFileSync } from "node:fs";
import Module, { createRequire } from "node:module";
import { dirname } from "node:path";
import { fileURLToPath } from "node:url";
import vm from "node:vm";

const bundle = fileURLToPath(new URL("../dist/cli/derive.cjs", import.meta.url));
if (existsSync(bundle)) {
  let cachedData;
  try {
    cachedData = readFileSync(`${bundle}.cache`);
  } catch {
    cachedData = undefined;
  }
  const script = new vm.Script(Module.wrap(readFileSync(bundle, "utf8")), { filename: bundle, cachedData });
  const cjs = { exports: {} };
  script.runInThisContext().call(cjs.exports, cjs.exports, createRequire(bundle), cjs, bundle, dirname(bundle));
} else {
  const source = fileURLToPath(new URL("../scripts/derive.ts", import.meta.url));
  const run = spawnSync(process.execPath, ["--import", "tsx", source, ...process.argv.slice(2)], { stdio: "inherit" });
  process.exit(run.status ?? 1);
}
