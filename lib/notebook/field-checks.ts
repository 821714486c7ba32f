/**
 * Light, instant checks for the notebook's grids. They catch typing slips
 * (a unit symbol that does not exist, a value that is not a number, a name the
 * language reserves); the server's unit check and model validation remain the
 * authority.
 */
import { RESERVED_NAMES, greekAdvice, hasGreekLetter } from "../mechanics/browser";
import { MODEL_UNIT_SYMBOLS, parseUnitText, UnitError } from "../units";
import { isBlankRow, isTableCell, parseParameterValue, type DerivationDocument, type TableKind } from "./document";

export type FieldCheck = { ok: true } | { ok: false; message: string; /** 0-based position in the text */ position: number };

const OK: FieldCheck = { ok: true };

/**
 * Checks that a unit is written as products, quotients and integer or decimal
 * powers of the SI symbols and numbers, with parentheses: `kg*m^2/s^2`,
 * `N*s/m`, `1`, `m/(s^2)`. The same reader as the engine's (lib/units).
 *
 * @example checkUnitSyntax("kg*m^2/s^2") // { ok: true }
 */
export function checkUnitSyntax(text: string): FieldCheck {
  try {
    parseUnitText(text, { symbols: MODEL_UNIT_SYMBOLS });
    return OK;
  } catch (error) {
    if (error instanceof UnitError) return { ok: false, message: error.message, position: error.position };
    throw error;
  }
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
 * Which names must differ from one another: symbols (coordinates, parameters,
 * inputs, definitions) share one space; constraints of both kinds another (each
 * names a multiplier); outputs a third.
 */
const NAME_SPACE: Record<TableKind, string> = {
  coordinates: "symbol",
  parameters: "symbol",
  inputs: "symbol",
  definitions: "symbol",
  constraints: "constraint",
  "rate-constraints": "constraint",
  outputs: "output",
};

/**
 * Names used twice within one name space (see NAME_SPACE), with the row ids
 * that use them. The grids mark every row of a clash.
 */
export function duplicateNames(doc: DerivationDocument): Map<string, { cellId: string; rowId: string; kind: TableKind }[]> {
  const uses = new Map<string, { cellId: string; rowId: string; kind: TableKind }[]>();
  for (const cell of doc.cells) {
    if (!isTableCell(cell)) continue;
    for (const row of cell.rows) {
      const name = row.name.trim();
      if (name === "" || isBlankRow(row)) continue;
      const key = `${NAME_SPACE[cell.kind]}:${name}`;
      const list = uses.get(key) ?? [];
      list.push({ cellId: cell.id, rowId: row.id, kind: cell.kind });
      uses.set(key, list);
    }
  }
  const clashes = new Map<string, { cellId: string; rowId: string; kind: TableKind }[]>();
  for (const [key, list] of uses) {
    if (list.length < 2) continue;
    const name = key.slice(key.indexOf(":") + 1);
    clashes.set(name, [...(clashes.get(name) ?? []), ...list]);
  }
  return clashes;
}
