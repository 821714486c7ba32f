/** Reading a stored document: migrate from the version it was written at, then validate. */
import { formatIssuePath, type DocumentIssue } from "./errors";
import { MigrationError, migrateDocument, storedVersionOf } from "./migrations";
import { DOCUMENT_SCHEMA_VERSION, derivationDocumentSchema, type DerivationDocument } from "./schema";

export type StoredDocumentResult =
  | { ok: true; document: DerivationDocument }
  /** `newerVersion` is set when a later Holonomy wrote the document. */
  | { ok: false; issues: DocumentIssue[]; newerVersion?: number };

export interface ParseStoredOptions {
  /** The title for a pre-notebook model file that has none (the derivation's row title). */
  title?: string;
}

/**
 * Reads a stored document (JSON from the database, a request or a file) of any
 * schema version: a pre-notebook model file is version 0. Older versions are
 * migrated, then the whole document is validated. Nothing is half-accepted:
 * either the document is valid or the issues are listed with their paths.
 *
 * @example parseStoredDocument({ title: "Sled", coordinates: [{ name: "x", unit: "m" }] }) // { ok: true, document: { schemaVersion: 2, … } }
 */
export function parseStoredDocument(input: unknown, { title }: ParseStoredOptions = {}): StoredDocumentResult {
  if (typeof input !== "object" || input === null || Array.isArray(input)) {
    return { ok: false, issues: [{ path: "", message: "a notebook document is a JSON object" }] };
  }
  const stored = input as Record<string, unknown>;
  const declared = stored.schemaVersion;
  if (typeof declared === "number" && Number.isInteger(declared) && declared > DOCUMENT_SCHEMA_VERSION) {
    return {
      ok: false,
      newerVersion: declared,
      issues: [
        { path: "schemaVersion", message: `written by a newer version of Holonomy (schema ${declared}; this one reads up to ${DOCUMENT_SCHEMA_VERSION})` },
      ],
    };
  }
  const version = storedVersionOf(stored);
  if (version === undefined) {
    const message =
      declared === undefined ? "missing: a notebook document names its schema version" : `expected a schema version from 1 to ${DOCUMENT_SCHEMA_VERSION}`;
    // Whatever else is wrong is judged as if it were meant to be current, so one answer lists it all.
    return { ok: false, issues: [{ path: "schemaVersion", message }, ...issuesOf({ ...stored, schemaVersion: DOCUMENT_SCHEMA_VERSION })] };
  }
  let migrated: unknown;
  try {
    migrated = migrateDocument(version === 0 && typeof stored.title !== "string" && title !== undefined ? { ...stored, title } : stored, version);
  } catch (error) {
    if (error instanceof MigrationError) return { ok: false, issues: error.issues };
    throw error;
  }
  const result = derivationDocumentSchema.safeParse(migrated);
  if (result.success) return { ok: true, document: result.data };
  return { ok: false, issues: issuesOfError(result.error) };
}

function issuesOfError(error: { issues: readonly { path: readonly PropertyKey[]; message: string }[] }): DocumentIssue[] {
  return error.issues.map((issue) => ({ path: formatIssuePath(issue.path), message: issue.message }));
}

function issuesOf(input: unknown): DocumentIssue[] {
  const result = derivationDocumentSchema.safeParse(input);
  return result.success ? [] : issuesOfError(result.error);
}
