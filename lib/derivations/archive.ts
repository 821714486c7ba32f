import "server-only";
import { randomUUID } from "node:crypto";
import { createDerivation } from "@/db/queries/derivations";
import { getFilesByDerivationId } from "@/db/queries/files";
import type { IdempotencyClaim } from "@/db/queries/idempotency";
import { getSimulationRunByIdAndDerivationId, getSimulationRunsByDerivationId } from "@/db/queries/runs";
import type { Derivation, NewSimulationRun, NewStoredFile } from "@/db/schema";
import { fileBaseName } from "@/lib/api/download";
import { env } from "@/lib/env";
import { AppError } from "@/lib/errors";
import { documentFromContent } from "@/lib/evaluation/document-content";
import { trajectoryKey, trajectoryOfRun } from "@/lib/runs/service";
import { INLINE_TRAJECTORY_VALUES, valueCount } from "@/lib/runs/trajectory";
import { deleteObject, getObjectBytes, putObject } from "@/lib/storage";
import {
  MAX_ARCHIVE_FILES,
  MAX_ARCHIVE_RUNS,
  NotebookArchiveError,
  readNotebookArchive,
  unpackedSize,
  writeNotebookArchive,
  type ArchiveFile,
  type ArchiveRun,
  type NotebookArchiveContents,
} from "./archive-format";

/** The limits an archive is read with: the configured archive limit and the upload limits per file. */
export function archiveLimits() {
  return {
    maxBytes: env.NOTEBOOK_ARCHIVE_MAX_BYTES,
    maxUnpackedBytes: env.NOTEBOOK_ARCHIVE_MAX_UNPACKED_BYTES,
    maxFileBytes: { measured_csv: env.UPLOAD_MAX_CSV_BYTES, image: env.UPLOAD_MAX_IMAGE_BYTES },
  };
}

function tooLargeToExport(what: string): AppError {
  return new AppError("too_large:archive", `${what}, so the archive could not be imported again; remove some runs or files and export again.`);
}

/**
 * The derivation as one notebook archive: its document, every stored run with
 * its trajectory, every attached file. Refused (413) when the archive would be
 * over the limits an import accepts, so every exported archive can be imported.
 */
export async function exportNotebookArchive(derivation: Derivation): Promise<{ bytes: Uint8Array; filename: string }> {
  const limits = archiveLimits();
  const document = documentFromContent(derivation.content, derivation.title);

  const storedRuns = await getSimulationRunsByDerivationId({ derivationId: derivation.id, limit: MAX_ARCHIVE_RUNS + 1 });
  if (storedRuns.length > MAX_ARCHIVE_RUNS) throw tooLargeToExport(`The derivation has more than ${MAX_ARCHIVE_RUNS} stored runs`);
  const storedFiles = await getFilesByDerivationId({ derivationId: derivation.id, limit: MAX_ARCHIVE_FILES + 1 });
  if (storedFiles.length > MAX_ARCHIVE_FILES) throw tooLargeToExport(`The derivation has more than ${MAX_ARCHIVE_FILES} files`);

  let total = 0;
  const runs: ArchiveRun[] = [];
  // Oldest first, as they were made.
  for (const summary of [...storedRuns].reverse()) {
    const run = await getSimulationRunByIdAndDerivationId({ id: summary.id, derivationId: derivation.id });
    const trajectory = run ? await trajectoryOfRun(run) : null;
    if (!run || !trajectory) {
      throw new AppError(
        "unprocessable:archive",
        `The trajectory of the run made ${summary.createdAt.toISOString()} is missing from storage; the archive would be incomplete.`,
      );
    }
    runs.push({
      settings: run.settings,
      status: run.status,
      failureReason: run.failureReason,
      failureMessage: run.failureMessage,
      timeReached: run.timeReached,
      summary: run.summary,
      pointCount: run.pointCount,
      energyDrift: run.energyDrift,
      modelHash: run.modelHash,
      createdAt: run.createdAt,
      createdBy: run.createdByName,
      trajectory,
    });
    total += valueCount(trajectory) * 8;
    if (total > limits.maxUnpackedBytes) throw tooLargeToExport(`The runs come to more than ${limits.maxUnpackedBytes} bytes`);
  }
  const files: ArchiveFile[] = [];
  for (const file of [...storedFiles].reverse()) {
    const bytes = await getObjectBytes({ key: file.objectKey });
    if (!bytes) throw new AppError("unprocessable:archive", `The file "${file.originalName}" is missing from storage; the archive would be incomplete.`);
    files.push({
      kind: file.kind,
      originalName: file.originalName,
      contentType: file.contentType,
      summary: file.summary,
      createdAt: file.createdAt,
      uploadedBy: file.uploadedByName,
      bytes,
    });
  }

  const contents: NotebookArchiveContents = { title: derivation.title, status: derivation.status, document, files, runs };
  if (unpackedSize(contents) > limits.maxUnpackedBytes) throw tooLargeToExport(`Its contents come to more than ${limits.maxUnpackedBytes} bytes unpacked`);
  const bytes = writeNotebookArchive(contents, { exportedAt: new Date() });
  if (bytes.byteLength > limits.maxBytes) throw tooLargeToExport(`The archive comes to more than ${limits.maxBytes} bytes`);
  return { bytes, filename: `${fileBaseName(derivation.title)}.notebook.zip` };
}

/** Every problem of an archive as one 422, listed by entry and field. */
export function archiveProblemsToAppError(error: NotebookArchiveError): AppError {
  const fieldErrors: Record<string, string[]> = {};
  for (const problem of error.problems) (fieldErrors[problem.path] ??= []).push(problem.message);
  const message = error.problems.length === 1 ? `${error.message}.` : `The archive has ${error.problems.length} problems, listed below.`;
  return new AppError("unprocessable:archive", message, { fieldErrors, details: { problems: error.problems } });
}

/** Checks an archive completely; every problem comes back at once as a 422. */
export function checkNotebookArchive(bytes: Uint8Array): NotebookArchiveContents {
  try {
    return readNotebookArchive(bytes, archiveLimits());
  } catch (error) {
    if (error instanceof NotebookArchiveError) throw archiveProblemsToAppError(error);
    throw error;
  }
}

/**
 * Creates a new derivation in `teamId` from checked archive contents: the
 * document as it was, the runs and the files (new ids, stored under the new
 * derivation). It starts as a draft owned by the importer, whatever its
 * status was. Objects are written first and the rows in one transaction; if
 * the rows cannot be written, the objects are removed again, so a failure
 * leaves nothing behind.
 */
export async function importNotebookArchive({
  contents,
  teamId,
  userId,
  title,
  idempotency,
}: {
  contents: NotebookArchiveContents;
  teamId: string;
  userId: string;
  title?: string;
  idempotency?: IdempotencyClaim;
}): Promise<Derivation> {
  const derivationId = randomUUID();
  const written: string[] = [];
  try {
    const fileRows: (Omit<NewStoredFile, "derivationId"> & { id: string })[] = [];
    for (const file of contents.files) {
      const id = randomUUID();
      const objectKey = `derivations/${derivationId}/files/${id}`;
      await putObject({ key: objectKey, body: file.bytes, contentType: file.contentType });
      written.push(objectKey);
      fileRows.push({
        id,
        kind: file.kind,
        objectKey,
        originalName: file.originalName,
        contentType: file.contentType,
        sizeBytes: file.bytes.byteLength,
        uploadedById: userId,
        summary: file.summary,
        createdAt: file.createdAt,
      });
    }
    const runRows: (Omit<NewSimulationRun, "derivationId"> & { id: string })[] = [];
    for (const run of contents.runs) {
      const id = randomUUID();
      const inline = valueCount(run.trajectory) <= INLINE_TRAJECTORY_VALUES;
      const key = inline ? null : trajectoryKey(derivationId, id);
      if (key) {
        await putObject({ key, body: new TextEncoder().encode(JSON.stringify(run.trajectory)), contentType: "application/json" });
        written.push(key);
      }
      const { createdBy: _createdBy, trajectory, ...fields } = run;
      runRows.push({ ...fields, id, trajectory: inline ? trajectory : null, trajectoryKey: key, createdById: userId });
    }
    const finalTitle = (title ?? contents.title).trim();
    const document = title ? { ...contents.document, title: finalTitle } : contents.document;
    return await createDerivation({
      id: derivationId,
      teamId,
      title: finalTitle,
      ownerId: userId,
      content: document,
      files: fileRows,
      runs: runRows,
      idempotency,
      auditDetails: { source: "notebook-archive", files: fileRows.length, runs: runRows.length },
    });
  } catch (error) {
    for (const key of written) {
      await deleteObject({ key }).catch((cleanup) => console.error("[holonomy] could not remove an object of a failed notebook import:", key, cleanup));
    }
    throw error;
  }
}
