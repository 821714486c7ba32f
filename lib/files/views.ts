/**
 * What the files API answers (GET/POST /api/derivations/[id]/files): built by
 * the route from the row, read by the notebook's measured-data panel. Plain
 * types and a pure function, safe to import on the client.
 */
import type { FileKind, MeasuredFileSummary, StoredFile } from "@/db/schema";

/** An attached file as a client sees it. */
export interface FileJson {
  id: string;
  derivationId: string;
  kind: FileKind;
  originalName: string;
  contentType: string;
  sizeBytes: number;
  summary: MeasuredFileSummary | null;
  uploadedBy: { id: string; name: string | null } | null;
  /** ISO 8601. */
  createdAt: string;
  /** Where the file's bytes are served (GET /api/files/[fileId]). */
  url: string;
}

export function fileView(file: StoredFile & { uploadedByName?: string | null }): FileJson {
  return {
    id: file.id,
    derivationId: file.derivationId,
    kind: file.kind,
    originalName: file.originalName,
    contentType: file.contentType,
    sizeBytes: file.sizeBytes,
    summary: file.summary ?? null,
    uploadedBy: file.uploadedById ? { id: file.uploadedById, name: file.uploadedByName ?? null } : null,
    createdAt: file.createdAt.toISOString(),
    url: `/api/files/${file.id}`,
  };
}
