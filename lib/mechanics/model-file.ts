/**
 * Reading a model file's text: JSON syntax first, every problem with its line
 * and column, then the model checks, every problem at once
 * (`collectModelIssues`). A file is refused as a whole with the full list, so
 * one round of fixes is enough.
 */
import { parse, printParseErrorCode, type ParseError } from "jsonc-parser";
import { ModelError } from "./errors";
import type { Model } from "./model";
import { collectModelIssues } from "./validate-model";
import { DEFAULT_MODEL_LIMITS, type ModelLimits } from "./limits";

// Keyed by the parser's error names (its codes are a const enum, out of reach of isolated modules).
const SYNTAX_MESSAGES: Record<string, string> = {
  InvalidSymbol: "unexpected character",
  InvalidNumberFormat: "not a valid number",
  PropertyNameExpected: 'a property name in double quotes is expected (a comma too many before "}"?)',
  ValueExpected: "a value is expected",
  ColonExpected: 'a ":" is expected after the property name',
  CommaExpected: 'a "," is missing before this',
  CloseBraceExpected: 'a closing "}" is missing',
  CloseBracketExpected: 'a closing "]" is missing',
  EndOfFileExpected: "more text after the end of the model",
  InvalidCommentToken: "comments are not allowed in a model file",
  UnexpectedEndOfComment: "comments are not allowed in a model file",
  UnexpectedEndOfString: "a string is not closed",
  UnexpectedEndOfNumber: "a number ends too early",
  InvalidUnicode: "an invalid \\u escape",
  InvalidEscapeCharacter: "an invalid escape after \\",
  InvalidCharacter: "a control character inside a string (write \\n or \\t)",
};

/** 1-based line and column of a UTF-16 offset. */
export function lineAndColumn(text: string, offset: number): { line: number; column: number } {
  let line = 1;
  let lineStart = 0;
  for (let i = 0; i < offset && i < text.length; i++) {
    if (text.charCodeAt(i) === 10) {
      line++;
      lineStart = i + 1;
    }
  }
  return { line, column: offset - lineStart + 1 };
}

/**
 * JSON syntax problems of a model file, each with its line and column; at most
 * one per line, since a parser's later complaints on a line follow from its first.
 *
 * @example jsonSyntaxIssues('{"title": "x" "kinetic": ""}') // [ModelError("syntax", "file", "line 1, column 15: a \",\" is missing before this")]
 */
export function jsonSyntaxIssues(text: string): { value: unknown; issues: ModelError[] } {
  const errors: ParseError[] = [];
  const value: unknown = parse(text, errors, { disallowComments: true, allowTrailingComma: false, allowEmptyContent: false });
  const issues: ModelError[] = [];
  const lines = new Set<number>();
  if (text.trim() === "") issues.push(new ModelError("syntax", "file", "the file is empty"));
  for (const error of errors) {
    const { line, column } = lineAndColumn(text, error.offset);
    const code = printParseErrorCode(error.error);
    if (lines.has(line) || (text.trim() === "" && code === "ValueExpected")) continue;
    lines.add(line);
    let reason = SYNTAX_MESSAGES[code] ?? "not valid JSON here";
    if (code === "InvalidSymbol") reason = `${reason} "${text.slice(error.offset, error.offset + Math.max(1, error.length))}"`;
    issues.push(new ModelError("syntax", "file", `line ${line}, column ${column}: ${reason}`));
  }
  return { value, issues };
}

/**
 * A model file's text as a `Model`, or every problem found: its JSON syntax
 * (line and column), else its format, names and expressions.
 */
export function readModelFile(text: string, limits: ModelLimits = DEFAULT_MODEL_LIMITS): { model: Model | null; issues: ModelError[] } {
  const syntax = jsonSyntaxIssues(text);
  if (syntax.issues.length > 0) return { model: null, issues: syntax.issues };
  return collectModelIssues(syntax.value, limits);
}
