// Derivation CLI (contract in the README, "Derivation CLI"): prints one JSON object
// for a model file; an invalid model exits with status 2 and one line on stderr
// naming field and column.
//
//   npm run --silent derive -- path/to/file.model.json
//   holonomy-derive path/to/file.model.json        (the package binary)
//
// The binary runs a bundle (dist/cli/derive.mjs, built with the worker bundles by
// the start and test commands) so a small model is answered in well under 0.4 s.
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

const USAGE = "usage: holonomy-derive <file.model.json>   (or: npm run --silent derive -- <file.model.json>; --help for more)";

const HELP = `${USAGE}

Derives the Euler–Lagrange equations of a model file and prints one JSON object:
  coordinates   coordinate names, in model order
  equations     per coordinate: coordinate, residual (= 0), latex
  massMatrix    M[i][j] = d residual_i / d q_j''
  forcing       f, with residual = M q'' - f (multiplier terms included)
  energy        the energy function h
  conserved     { name, expr, reason } per conserved quantity
  constraints   { name, kind: "position" | "rate", expr, multiplier } (only with constraints)
  outputs       { name, expr, unit } (only with outputs)
  timingMs      in-process derivation time

Constraints: a position constraint g = 0 augments L by lambda_<name>*g, so the residual
of q gains -lambda_<name>*dg/dq; a rate constraint sum_j a_j*q_j' + a_0 = 0 adds
-mu_<name>*a_q. "multiplier" is the solved lambda or mu, or null where no closed form
was produced (it is then evaluated numerically at evaluation time).

Exit status: 0 success; 2 unreadable file, invalid JSON or an invalid model (one line on
stderr naming the field and column).`;

function main(): void {
  const args = process.argv.slice(2);
  if (args.includes("--help") || args.includes("-h")) {
    process.stdout.write(`${HELP}\n`);
    process.exit(0);
  }
  const path = args[0];
  if (!path || args.length > 1 || path.startsWith("-")) fail(USAGE, 2);
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
