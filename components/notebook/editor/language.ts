/**
 * Highlighting for Holonomy's expression language (DESIGN.md): numbers,
 * identifiers with primes (q' rate, q'' acceleration), the whitelisted
 * functions, pi and t, operators and parentheses.
 */
import { HighlightStyle, StreamLanguage, bracketMatching, syntaxHighlighting, type StringStream } from "@codemirror/language";
import { tags } from "@lezer/highlight";
import type { Extension } from "@codemirror/state";
import { FUNCTION_NAMES } from "@/lib/mechanics/browser";

const FUNCTIONS: ReadonlySet<string> = new Set(FUNCTION_NAMES);

interface ScanState {
  /** The previous token was a name, so a following `'` marks its rate. */
  afterName: boolean;
}

/** Token names, each mapped to a highlighting tag in `tokenTable`. */
function token(stream: StringStream, state: ScanState): string | null {
  if (stream.eatSpace()) return null;
  if (state.afterName && stream.match(/^'{1,2}/)) {
    state.afterName = false;
    return "prime";
  }
  state.afterName = false;
  if (stream.match(/^(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?/)) return "number";
  const word = stream.match(/^[A-Za-z_][A-Za-z0-9_]*/) as RegExpMatchArray | null;
  if (word) {
    const name = word[0];
    if (FUNCTIONS.has(name)) return "function";
    if (name === "pi") return "constant";
    if (name === "t") {
      state.afterName = true;
      return "time";
    }
    state.afterName = true;
    return "name";
  }
  if (stream.match(/^[-+*/^]/)) return "operator";
  if (stream.match(/^[()]/)) return "paren";
  stream.next();
  return "invalid";
}

export const expressionStreamLanguage = StreamLanguage.define<ScanState>({
  name: "holonomy-expression",
  startState: () => ({ afterName: false }),
  copyState: (state) => ({ ...state }),
  token,
  tokenTable: {
    number: tags.number,
    name: tags.variableName,
    prime: tags.special(tags.variableName),
    function: tags.function(tags.variableName),
    constant: tags.constant(tags.variableName),
    time: tags.standard(tags.variableName),
    operator: tags.arithmeticOperator,
    paren: tags.paren,
    invalid: tags.invalid,
  },
  languageData: { closeBrackets: { brackets: ["("] } },
});

/** Colours come from the notebook's CSS variables, so light and dark themes both apply. */
export const expressionHighlightStyle = HighlightStyle.define([
  { tag: tags.number, color: "var(--seal, #8c6a17)" },
  { tag: tags.variableName, color: "var(--ink, #24272c)" },
  { tag: tags.special(tags.variableName), color: "var(--action, #0f5f63)", fontWeight: "600" },
  { tag: tags.function(tags.variableName), color: "var(--action, #0f5f63)" },
  { tag: tags.constant(tags.variableName), color: "var(--seal, #8c6a17)", fontStyle: "italic" },
  { tag: tags.standard(tags.variableName), fontStyle: "italic" },
  { tag: tags.arithmeticOperator, color: "var(--muted, #5c6169)" },
  { tag: tags.paren, color: "var(--muted, #5c6169)" },
  { tag: tags.invalid, color: "var(--danger, #b3261e)", textDecoration: "underline wavy" },
]);

/** Highlighting and bracket matching for an expression editor. */
export function expressionLanguage(): Extension[] {
  return [expressionStreamLanguage, syntaxHighlighting(expressionHighlightStyle), bracketMatching()];
}
