/**
 * The page bundle never carries the engine's computer algebra (nerdamer, about
 * 500 kB): every module marked "use client", and everything it imports, stays
 * clear of it. Client code reaches the engine through `@/lib/mechanics/browser`
 * (the lint rule in eslint.config.mjs keeps components from importing the full
 * entry); this check follows the actual imports, so a new path in through a
 * shared library module is caught as well. The browser's simulation worker is a
 * bundle of its own (loaded with `new Worker(new URL(…))`, which is not followed
 * here) and runs the whole engine.
 */
import { readdirSync, readFileSync } from "node:fs";
import path from "node:path";
import { build, type Metafile, type Plugin } from "esbuild";
import { describe, expect, it } from "vitest";

const root = path.resolve(import.meta.dirname, "../../..");

function sourceFiles(folder: string): string[] {
  return readdirSync(path.join(root, folder), { recursive: true, encoding: "utf8" })
    .filter((name) => /\.tsx?$/.test(name))
    .map((name) => path.join(folder, name));
}

const clientModules = [...sourceFiles("app"), ...sourceFiles("components")].filter((file) =>
  /^\s*(\/\/[^\n]*\n\s*)*["']use client["']/.test(readFileSync(path.join(root, file), "utf8")),
);

/** Packages stay outside the bundle: the question is which of them the client modules import. */
const packagesExternal: Plugin = {
  name: "packages-external",
  setup(plugin) {
    // Go regular expressions have no lookahead: a bare specifier starts with a letter or "@x".
    plugin.onResolve({ filter: /^([a-z]|@[a-z])/ }, (args) => ({ path: args.path, external: true }));
  },
};

async function importGraph(entryPoints: string[]): Promise<Metafile> {
  const result = await build({
    absWorkingDir: root,
    entryPoints,
    bundle: true,
    write: false,
    metafile: true,
    outdir: "out",
    format: "esm",
    platform: "browser",
    jsx: "automatic",
    loader: { ".css": "empty" },
    plugins: [packagesExternal],
    logLevel: "silent",
  });
  return result.metafile;
}

/** The chain of modules from an entry to the first one that imports `target` (a package), or null. */
function pathToPackage(metafile: Metafile, entry: string, target: string): string[] | null {
  const previous = new Map<string, string | null>([[entry, null]]);
  const queue = [entry];
  while (queue.length > 0) {
    const file = queue.shift()!;
    for (const imported of metafile.inputs[file]?.imports ?? []) {
      if (imported.external) {
        if (imported.path === target || imported.path.startsWith(`${target}/`)) {
          const chain = [imported.path];
          for (let at: string | null = file; at !== null; at = previous.get(at) ?? null) chain.unshift(at);
          return chain;
        }
        continue;
      }
      if (!previous.has(imported.path)) {
        previous.set(imported.path, file);
        queue.push(imported.path);
      }
    }
  }
  return null;
}

describe("client bundle", () => {
  it("finds the client modules", () => {
    expect(clientModules.length).toBeGreaterThan(20);
    expect(clientModules).toContain(path.join("components", "notebook", "notebook.tsx"));
  });

  it("reaches nerdamer from the engine's full entry (the check sees it when it is there)", async () => {
    const metafile = await importGraph(["lib/mechanics/index.ts"]);
    expect(pathToPackage(metafile, "lib/mechanics/index.ts", "nerdamer")).not.toBeNull();
  });

  it("keeps nerdamer out of every client module and the engine's browser entry", async () => {
    const entries = [...clientModules, "lib/mechanics/browser.ts", "lib/simulate/index.ts"];
    const metafile = await importGraph(entries);
    const offenders = entries.map((entry) => pathToPackage(metafile, entry, "nerdamer")).filter((chain) => chain !== null);
    expect(offenders).toEqual([]);
  });
});
