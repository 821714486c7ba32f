// Derivation CLI (contract in DESIGN.md): prints one JSON object for a model file;
// an invalid model exits with status 2 and one line on stderr naming field and column.
//
//   npm run --silent derive -- path/to/file.model.json
import { readFileSync, statSync } from "node:fs";
import { EngineLimitError, ModelError, derivationReport } from "../lib/mechanics";

const MAX_FILE_BYTES = 1_000_000;

function fail(line: string, status: number): never {
  process.stderr.write(`${line.replace(/\s*\n\s*/g, " ")}\n`);
  process.exit(status);
}

/** Line and column of a JSON.parse error, when the message carries a position. */
function jsonErrorLocation(text: string, message: string): string {
  const match = /position (\d+)/.exec(message);
  if (!match) return "";
  const position = Number(match[1]);
  const before = text.slice(0, position);
  const line = before.split("\n").length;
  const column = position - before.lastIndexOf("\n");
  return `, line ${line}, column ${column}`;
}

function main(): void {
  const path = process.argv[2];
  if (!path || process.argv.length > 3) fail("usage: npm run --silent derive -- <file.model.json>", 2);
  let text: string;
  try {
    if (statSync(path).size > MAX_FILE_BYTES) fail(`${path}: the file is larger than ${MAX_FILE_BYTES} bytes`, 2);
    text = readFileSync(path, "utf8");
  } catch (error) {
    fail(`${path}: ${(error as NodeJS.ErrnoException).code === "ENOENT" ? "no such file" : (error as Error).message}`, 2);
  }
  let json: unknown;
  try {
    json = JSON.parse(text);
  } catch (error) {
    const message = (error as Error).message;
    fail(`model${jsonErrorLocation(text, message)}: not valid JSON (${message})`, 2);
  }
  try {
    process.stdout.write(`${JSON.stringify(derivationReport(json), null, 2)}\n`);
  } catch (error) {
    if (error instanceof ModelError) fail(error.toLine(), 2);
    if (error instanceof EngineLimitError) fail(`model: ${error.message}`, 2);
    throw error;
  }
}

main();
