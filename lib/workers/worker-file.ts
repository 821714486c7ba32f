import { createHash } from "node:crypto";
import { existsSync, readFileSync } from "node:fs";
import path from "node:path";

/**
 * The bundled engine worker (`npm run build:workers`), resolved from the
 * project folder the server or script runs in. Bundlers must not follow it,
 * so it is a path, not an import.
 */
export function engineWorkerFile(): string {
  return path.join(process.cwd(), "dist", "workers", "engine-worker.mjs");
}

let cachedVersion: { file: string; version: string } | null = null;

/**
 * The engine version that cached evaluations are keyed by: the SHA-256 of the
 * worker bundle, so any change to the engine's code invalidates old results
 * without anyone remembering to bump a number.
 */
export function engineVersion(file: string = engineWorkerFile()): string {
  if (cachedVersion?.file === file) return cachedVersion.version;
  // The bundle is read at run time, not traced into the server build.
  if (!existsSync(/*turbopackIgnore: true*/ file)) throw new Error("the engine worker bundle is missing; run `npm run build:workers`");
  const version = createHash("sha256").update(readFileSync(/*turbopackIgnore: true*/ file)).digest("hex").slice(0, 16);
  cachedVersion = { file, version };
  return version;
}
