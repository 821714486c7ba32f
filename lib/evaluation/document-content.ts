import {
  blankDocument,
  DocumentError,
  documentToModel,
  modelToDocument,
  parseStoredDocument,
  type DerivationDocument,
} from "@/lib/notebook/document";
import type { Model } from "@/lib/mechanics/model";
import { ModelError } from "@/lib/mechanics/errors";
import { validateModel } from "@/lib/mechanics/validate-model";
import { AppError } from "@/lib/errors";

/**
 * The notebook document stored in a derivation's content. Rows written before
 * the notebook existed hold a model file (or nothing); those are read as the
 * document the model file converts to, so every derivation opens.
 */
export function documentFromContent(content: unknown, title: string): DerivationDocument {
  const stored = parseStoredDocument(content);
  if (stored.ok) return stored.document;
  if (content === null || typeof content !== "object" || Object.keys(content).length === 0) return blankDocument(title);
  if (!("cells" in content)) {
    try {
      return modelToDocument({ ...(validateModel(content) as Model), title: (content as { title?: string }).title ?? title });
    } catch {
      // fall through: neither a document nor a model file
    }
  }
  throw new AppError("unprocessable:derivation", "The stored content of this derivation is not a notebook document.", {
    details: { issues: stored.issues.slice(0, 20) },
  });
}

/** A ModelError as the JSON body the editors underline from (field, column, length, code). */
export function modelErrorToAppError(error: ModelError): AppError {
  return new AppError("unprocessable:model", error.toLine(), {
    fieldErrors: { [error.field]: [error.message] },
    details: { diagnostics: [error.toJSON()] },
  });
}

/**
 * Every problem of a refused model file in one 422: the message counts them,
 * `fieldErrors` lists each under its field (with the column inside an
 * expression), `details.diagnostics` carries them for editors.
 */
export function modelIssuesToAppError(issues: readonly ModelError[]): AppError {
  if (issues.length === 1) return modelErrorToAppError(issues[0]!);
  const fieldErrors: Record<string, string[]> = {};
  for (const issue of issues) {
    const reason = issue.column === null ? issue.message : `column ${issue.column}: ${issue.message}`;
    (fieldErrors[issue.field] ??= []).push(reason);
  }
  return new AppError("unprocessable:model", `The file has ${issues.length} problems.`, {
    fieldErrors,
    details: { diagnostics: issues.map((issue) => issue.toJSON()) },
  });
}

/** The model file of a document; a value that is not a number is a 422 naming its field. */
export function modelFromDocument(doc: DerivationDocument): Model {
  try {
    return documentToModel(doc);
  } catch (error) {
    if (error instanceof DocumentError) {
      throw new AppError("unprocessable:model", `${error.field}: ${error.message}`, {
        fieldErrors: { [error.field]: [error.message] },
        details: { diagnostics: [{ code: "schema", field: error.field, column: null, length: 1, message: error.message }] },
      });
    }
    throw error;
  }
}
