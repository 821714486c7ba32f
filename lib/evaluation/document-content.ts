import { DocumentError, documentToModel, parseStoredDocument, type DerivationDocument, type DocumentIssue } from "@/lib/notebook/document";
import { type Model, ModelError } from "@/lib/mechanics";
import { AppError, type FieldErrors } from "@/lib/errors";

/** At most this many issues travel in one answer; the first ones locate the problem. */
const MAX_ISSUES = 50;

function fieldErrorsOf(issues: DocumentIssue[], field: string): FieldErrors {
  const fieldErrors: FieldErrors = {};
  for (const issue of issues.slice(0, MAX_ISSUES)) (fieldErrors[issue.path ? `${field}.${issue.path}` : field] ??= []).push(issue.message);
  return fieldErrors;
}

/**
 * The one gate for content written to a derivation (create, update, the shared document's JSON copy,
 * import, fits, seed): a document of any schema version (a pre-notebook model
 * file is version 0) in, the migrated and validated document out. Throws a 400
 * with field errors keyed `<field>.<path>` (`content.cells[2].rows[0].name`), or
 * a 422 for a document written by a newer Holonomy than this one.
 */
export function validDocumentOrThrow(input: unknown, { field = "document", title }: { field?: string; title?: string } = {}): DerivationDocument {
  const parsed = parseStoredDocument(input, { title });
  if (parsed.ok) return parsed.document;
  const fieldErrors = fieldErrorsOf(parsed.issues, field);
  if (parsed.newerVersion !== undefined) {
    throw new AppError(
      "unprocessable:derivation",
      `This notebook document was written by a newer version of Holonomy (schema ${parsed.newerVersion}); update Holonomy to open it.`,
      { fieldErrors },
    );
  }
  throw new AppError("bad_request:validation", "The notebook document is not valid.", { fieldErrors });
}

/**
 * The notebook document stored in a derivation's content, migrated from the
 * version it was written at (rows written before the notebook hold a model
 * file, or nothing). A 422 listing the issues when it cannot be read; the
 * notebook page shows those instead (see `parseStoredDocument`).
 */
export function documentFromContent(content: unknown, title: string): DerivationDocument {
  const stored = parseStoredDocument(content, { title });
  if (stored.ok) return stored.document;
  throw new AppError("unprocessable:derivation", "The stored content of this derivation is not a notebook document this version of Holonomy can read.", {
    details: { issues: stored.issues.slice(0, MAX_ISSUES) },
  });
}

/** A ModelError as the JSON body the editors underline from (field, column, length, code). */
/** The document a request works on: the one it posted (the page's current content), else the stored one. */
export function documentForRequest(posted: unknown, derivation: { content: unknown; title: string }): DerivationDocument {
  return posted !== undefined ? validDocumentOrThrow(posted) : documentFromContent(derivation.content, derivation.title);
}

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
