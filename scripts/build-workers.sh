#!/usr/bin/env bash
# Bundles the worker-thread entries that the server loads by path at run time
# (dist/workers/*.mjs): the engine worker and the simulation worker; and the
# derivation CLI (dist/cli/). They are
# plain Node ESM bundles; the banner gives bundled CommonJS packages a `require`.
# Packages' ES module builds come first (as in the browser bundles): the UMD build
# of jsonc-parser (the model-file reader, behind the engine's entry) loads its
# parts with a require that no bundler can follow.
set -euo pipefail
cd "$(dirname "${BASH_SOURCE[0]}")/.."
banner="import { createRequire as __createRequire } from 'node:module'; const require = __createRequire(import.meta.url);"
bundle() {
  npx esbuild "$1" --bundle --platform=node --format=esm --target=node20 --main-fields=module,main \
    --outfile="dist/workers/$2" --banner:js="$banner" --log-level=warning
}
bundle lib/mechanics/worker/engine-worker.ts engine-worker.mjs
bundle lib/runs/simulation-worker.ts simulation-worker.mjs
# The derivation CLI (the package binary bin/holonomy-derive.mjs runs it): one minified
# CommonJS file and V8's code cache for it, so no TypeScript is loaded or compiled at start.
npx esbuild scripts/derive.ts --bundle --platform=node --format=cjs --target=node20 --minify \
  --outfile=dist/cli/derive.cjs --log-level=warning
node scripts/build-cli-cache.mjs
