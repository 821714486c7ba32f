// Writes V8's code cache for the derivation CLI bundle (dist/cli/derive.cjs.cache)
// after running it once on a small model, so the functions it compiles lazily are
// cached too. bin/holonomy-derive.mjs loads the bundle with this cache and skips
// most of the parsing and compiling at start. A cache from another Node version
// is rejected by V8 and the bundle is compiled as usual.
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import Module, { createRequire } from "node:module";
import { tmpdir } from "node:os";
import { dirname, join } from "node:path";
import { fileURLToPath } from "node:url";
import vm from "node:vm";

const file = fileURLToPath(new URL("../dist/cli/derive.cjs", import.meta.url));
const folder = mkdtempSync(join(tmpdir(), "holonomy-cli-"));
const model = join(folder, "warm-up.model.json");
writeFileSync(
  model,
  JSON.stringify({
    title: "warm-up",
    coordinates: [
      { name: "x", unit: "m" },
      { name: "y", unit: "m" },
    ],
    parameters: [
      { name: "m", unit: "kg" },
      { name: "g", unit: "m/s^2" },
      { name: "l", unit: "m" },
    ],
    kinetic: "m/2*(x'^2 + y'^2)",
    potential: "m*g*y",
    constraints: [{ name: "rod", expr: "x^2 + y^2 - l^2" }],
  }),
);
const script = new vm.Script(Module.wrap(readFileSync(file, "utf8")), { filename: file });
const argv = process.argv;
const write = process.stdout.write;
process.argv = [argv[0], file, model];
process.stdout.write = () => true;
try {
  const cjs = { exports: {} };
  script.runInThisContext().call(cjs.exports, cjs.exports, createRequire(file), cjs, file, dirname(file));
} finally {
  process.stdout.write = write;
  process.argv = argv;
  rmSync(folder, { recursive: true, force: true });
}
writeFileSync(`${file}.cache`, script.createCachedData());
