/**
 * The engine's browser-safe entry: the expression language, the model's shape
 * and limits, LaTeX rendering and the texts the notebook states. Nothing
 * behind it reaches the computer-algebra path (nerdamer) or a Node built-in,
 * so client components and the code they share with the server (lib/notebook)
 * import this, never `@/lib/mechanics`, which would carry the whole engine
 * into the page bundle. Everything here is exported by `@/lib/mechanics` too.
 *
 * @example
 *   import { parseExpression, toLatex } from "@/lib/mechanics/browser";
 *   toLatex(parseExpression("m*l^2*theta''"));
 */
export type { Model, Coordinate, Parameter, Input, Definition, NamedUnit } from "./model";
export { DEFAULT_MODEL_LIMITS } from "./limits";
export type { ModelLimits } from "./limits";
export { ModelError, ExpressionError, EngineLimitError } from "./errors";
export type { ModelErrorCode, ExpressionErrorCode } from "./errors";
export { parseExpression, formatExpression, expressionTree } from "./expr/parse";
export type { ExpressionSource } from "./expr/parse";
export { FUNCTION_NAMES, RESERVED_NAMES, TIME, walk, symbolsOf } from "./expr/ast";
export type { Expr, FunctionName } from "./expr/ast";
export { spellGreekLetters, hasGreekLetter, greekAdvice } from "./expr/greek";
export { toLatex, toLatexTerms, joinLatexTerms, symbolLatex, termId } from "./latex";
export type { LatexTerm } from "./latex";
export { topLevelTerms } from "./terms";
export type { SignedTerm } from "./terms";
export { STABILITY_RULE } from "./stability-rule";
export { chainModel } from "./templates/chain";
export type { ChainOptions } from "./templates/chain";
// Frequency response of a linearization (numeric only: no computer algebra behind it).
export { CODE_LANGUAGES } from "./codegen/prepare";
export type { CodeLanguage } from "./codegen/prepare";
export { polesOf, transmissionZeros, frequencyResponse, exportStateSpace } from "./frequency-response";
export type { StateSpace, PoleInfo, ZerosResult, FrequencyResponseOptions, FrequencyResponse, StateSpaceFormat } from "./frequency-response";
