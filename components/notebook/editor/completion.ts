/**
 * Completion of the derivation's own symbols (coordinates with their rates and
 * accelerations, parameters, inputs, definitions and their rates) and of the
 * expression language's functions and constants.
 */
import { autocompletion, type Completion, type CompletionContext, type CompletionResult } from "@codemirror/autocomplete";
import type { EditorView } from "@codemirror/view";
import type { Extension } from "@codemirror/state";
import { FUNCTION_NAMES } from "@/lib/mechanics/browser";
import type { DocumentSymbols } from "@/lib/notebook/document";
import { symbolsField } from "./context";

function applyCall(name: string) {
  return (view: EditorView, _completion: Completion, from: number, to: number) => {
    // Reuse a "(" that is already there rather than doubling it.
    const hasParen = view.state.sliceDoc(to, to + 1) === "(";
    const insert = hasParen ? name : `${name}()`;
    view.dispatch({ changes: { from, to, insert }, selection: { anchor: from + name.length + 1 }, userEvent: "input.complete" });
  };
}

/** The completion options for a set of symbols, in the order they are offered. */
export function symbolOptions(symbols: DocumentSymbols): Completion[] {
  const options: Completion[] = [];
  for (const name of symbols.coordinates) {
    options.push(
      { label: name, type: "variable", detail: "coordinate", boost: 4 },
      { label: `${name}'`, type: "variable", detail: "rate", boost: 3 },
      { label: `${name}''`, type: "variable", detail: "acceleration", boost: 2 },
    );
  }
  for (const name of symbols.definitions) {
    options.push(
      { label: name, type: "variable", detail: "definition", boost: 3 },
      { label: `${name}'`, type: "variable", detail: "rate of definition", boost: 2 },
    );
  }
  for (const name of symbols.parameters) options.push({ label: name, type: "constant", detail: "parameter", boost: 1 });
  for (const name of symbols.inputs) options.push({ label: name, type: "variable", detail: "input", boost: 1 });
  for (const name of symbols.multipliers ?? []) options.push({ label: name, type: "variable", detail: "multiplier", boost: 1 });
  for (const name of FUNCTION_NAMES) options.push({ label: name, type: "function", detail: "function", apply: applyCall(name) });
  options.push({ label: "pi", type: "constant", detail: "π" }, { label: "t", type: "variable", detail: "time" });
  return options;
}

/** The completion source, reading the symbols from editor state. */
export function symbolCompletionSource(context: CompletionContext): CompletionResult | null {
  const word = context.matchBefore(/[A-Za-z_][A-Za-z0-9_]*'{0,2}/);
  if (!word || (word.from === word.to && !context.explicit)) return null;
  return {
    from: word.from,
    options: symbolOptions(context.state.field(symbolsField)),
    validFor: /^[A-Za-z_][A-Za-z0-9_]*'{0,2}$/,
  };
}

export function symbolCompletion(): Extension[] {
  return [autocompletion({ override: [symbolCompletionSource], activateOnTyping: true, icons: false })];
}
