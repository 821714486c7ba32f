/**
 * Light, instant checks for the notebook's grids. They catch typing slips
 * (a unit symbol that does not exist, a value that is not a number, a name the
 * language reserves); the server's unit check and model validation remain the
 * authority.
 */
import { RESERVED_NAMES } from "../mechanics/expr/ast";
import { greekAdvice, hasGreekLetter } from "../mechanics/expr/greek";
import { isBlankRow, parseParameterValue, type DerivationDocument, type TableKind } from "./document";

/** SI symbols a unit may be written with (DESIGN.md, "Model file"). */
export const UNIT_SYMBOLS = ["kg", "m", "s", "rad", "N", "J", "W", "Pa", "Hz"] as const;
const SYMBOLS: ReadonlySet<string> = new Set(UNIT_SYMBOLS);

export type FieldCheck = { ok: true } | { ok: false; message: string; /** 0-based position in the text */ position: number };

const OK: FieldCheck = { ok: true };

/**
 * Checks that a unit is written as products, quotients and integer or decimal
 * powers of the SI symbols and numbers, with parentheses: `kg*m^2/s^2`,
 * `N*s/m`, `1`, `m/(s^2)`.
 *
 * @example checkUnitSyntax("kg*m^2/s^2") // { ok: true }
 */
export function checkUnitSyntax(text: string): FieldCheck {
  const tokens: { kind: "sym" | "num" | "op" | "(" | ")"; text: string; at: number }[] = [];
  const pattern = /\s*(?:([A-Za-z]+)|(\d+(?:\.\d+)?)|([*/^-])|(\()|(\))|(\S))/y;
  let match: RegExpExecArray | null;
  while (pattern.lastIndex < text.length && (match = pattern.exec(text))) {
    const at = match.index + match[0].length - match[0].trimStart().length;
    if (match[1]) {
      if (!SYMBOLS.has(match[1])) return { ok: false, message: `"${match[1]}" is not a unit symbol; use ${UNIT_SYMBOLS.join(" ")}`, position: at };
      tokens.push({ kind: "sym", text: match[1], at });
    } else if (match[2]) tokens.push({ kind: "num", text: match[2], at });
    else if (match[3]) tokens.push({ kind: "op", text: match[3], at });
    else if (match[4]) tokens.push({ kind: "(", text: "(", at });
    else if (match[5]) tokens.push({ kind: ")", text: ")", at });
    else if (match[6]) return { ok: false, message: `unexpected "${match[6]}" in a unit`, position: at };
  }
  if (tokens.length === 0) return { ok: false, message: "a unit is required (write 1 for none)", position: 0 };

  let index = 0;
  const fail = (message: string): FieldCheck => ({ ok: false, message, position: tokens[index]?.at ?? text.trimEnd().length });

  // unit := factor (("*" | "/") factor)* ; factor := atom ("^" "-"? number)? ; atom := symbol | number | "(" unit ")"
  function unit(): FieldCheck {
    const first = factor();
    if (!first.ok) return first;
    while (tokens[index]?.text === "*" || tokens[index]?.text === "/") {
      index++;
      const next = factor();
      if (!next.ok) return next;
    }
    return OK;
  }
  function factor(): FieldCheck {
    const token = tokens[index];
    if (!token) return fail("the unit ends too early");
    if (token.kind === "sym" || token.kind === "num") index++;
    else if (token.kind === "(") {
      index++;
      const inner = unit();
      if (!inner.ok) return inner;
      if (tokens[index]?.kind !== ")") return fail(`expected ")"`);
      index++;
    } else return fail(`unexpected "${token.text}"`);
    if (tokens[index]?.text === "^") {
      index++;
      // A negative exponent is written without parentheses (s^-1) or inside them (s^(-1)).
      const parenthesized = tokens[index]?.kind === "(";
      if (parenthesized) index++;
      if (tokens[index]?.text === "-") index++;
      if (tokens[index]?.kind !== "num") return fail("a power needs a number");
      index++;
      if (parenthesized) {
        if (tokens[index]?.kind !== ")") return fail(`expected ")"`);
        index++;
      }
    }
    return OK;
  }
  const result = unit();
  if (!result.ok) return result;
  if (index < tokens.length) return fail(`unexpected "${tokens[index]!.text}"`);
  return OK;
}

/** A parameter value: blank (symbolic) or a finite number such as `9.81`, `-2`, `1.5e-3`. */
export function checkParameterValue(text: string): FieldCheck {
  if (parseParameterValue(text) !== null) return OK;
  return { ok: false, message: "not a number (leave blank to keep the parameter symbolic)", position: 0 };
}

const IDENTIFIER = /^[A-Za-z_][A-Za-z0-9_]*$/;

/** A name for a coordinate, parameter, input or definition. */
export function checkSymbolName(text: string): FieldCheck {
  const name = text.trim();
  if (name === "") return { ok: false, message: "a name is required", position: 0 };
  if (!IDENTIFIER.test(name)) {
    if (hasGreekLetter(name)) return { ok: false, message: greekAdvice(name), position: 0 };
    return { ok: false, message: "letters, digits and _ only, starting with a letter", position: 0 };
  }
  if (RESERVED_NAMES.has(name)) return { ok: false, message: `"${name}" is reserved by the expression language`, position: 0 };
  return OK;
}

/**
 * Names used by more than one coordinate, parameter, input or definition, with
 * the row ids that use them. The grids mark every row of a clash.
 */
export function duplicateNames(doc: DerivationDocument): Map<string, { cellId: string; rowId: string; kind: TableKind }[]> {
  const uses = new Map<string, { cellId: string; rowId: string; kind: TableKind }[]>();
  for (const cell of doc.cells) {
    if (cell.kind !== "coordinates" && cell.kind !== "parameters" && cell.kind !== "inputs" && cell.kind !== "definitions") continue;
    for (const row of cell.rows) {
      const name = row.name.trim();
      if (name === "" || isBlankRow(row)) continue;
      const list = uses.get(name) ?? [];
      list.push({ cellId: cell.id, rowId: row.id, kind: cell.kind });
      uses.set(name, list);
    }
  }
  for (const [name, list] of uses) if (list.length < 2) uses.delete(name);
  return uses;
}
