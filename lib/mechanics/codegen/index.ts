import { emitC } from "./c";
import { emitJulia } from "./julia";
import { emitMatlab } from "./matlab";
import { prepareModel, type CodeExportInput, type CodeLanguage } from "./prepare";
import { emitPython } from "./python";
import { emitTypeScript } from "./typescript";

export type { CodeExportInput, CodeLanguage } from "./prepare";
export { CODE_LANGUAGES } from "./prepare";

const EMITTERS: Record<CodeLanguage, (model: ReturnType<typeof prepareModel>) => string> = {
  c: emitC,
  python: emitPython,
  julia: emitJulia,
  matlab: emitMatlab,
  typescript: emitTypeScript,
};

/**
 * Self-contained code for M(q, q', t, p, u), f(…), the accelerations and the
 * state-space A, B (exact Jacobians, valid at any state) in one language, with
 * common subexpressions hoisted into temporaries.
 *
 * @example exportCode({ coordinates: ["x"], parameters: [{ name: "k", value: 4 }], massMatrix: [["1"]], forcing: ["-k*x"] }, "python")
 */
export function exportCode(input: CodeExportInput, language: CodeLanguage): string {
  const emit = EMITTERS[language];
  if (!emit) throw new RangeError(`unknown language "${String(language)}"`);
  return emit(prepareModel(input));
}
