/**
 * The notebook archive (`*.notebook.zip`): one file holding a whole derivation
 * notebook, so that nothing is lost between teams or installations. Unlike the
 * model file (the portable model: coordinates, parameters, energies, forces),
 * it keeps the document as it is (notes, the linearization, simulation and
 * export cells, mechanism points, cell titles), the stored simulation runs with
 * their trajectories, and the attached measured-data files and images, byte for
 * byte.
 *
 * Layout (a plain zip, readable by any unzip tool):
 *
 *   manifest.json        format, version, the derivation's title and status, and
 *                        every other entry with its size and SHA-256
 *   document.json        the notebook document (lib/notebook/document.ts)
 *   runs/001.json …      one stored run each: settings, outcome, summary, trajectory
 *   files/001-name.csv … the attached files as uploaded
 *
 * Pure functions, no I/O: the service (archive.ts) reads and writes storage.
 * Reading checks everything and reports every problem at once.
 */
import { createHash } from "node:crypto";
import { strToU8, unzipSync, zipSync, type Zippable } from "fflate";
import { z } from "zod";
import { fileKinds, simulationRunStatuses, type FileKind, type MeasuredFileSummary, type SimulationRunStatus, type StoredTrajectory } from "@/db/schema";
import type { RunSummary } from "@/db/schema";
import { derivationStatuses, type DerivationStatus } from "@/lib/domain";
import { parseStoredDocument, type DerivationDocument } from "@/lib/notebook/document";
import { MeasuredDataError } from "@/lib/simulate";
import { decodeCsv, imageTypeOf, looksLikeMarkup, summariseMeasuredCsv, UploadError } from "@/lib/files/checks";
import { safeFileName } from "@/lib/files/names";

export const NOTEBOOK_ARCHIVE_FORMAT = "holonomy.notebook-archive";
/** Bump when the layout changes; readers refuse archives from a newer version. */
export const NOTEBOOK_ARCHIVE_VERSION = 1;
export const MAX_ARCHIVE_FILES = 200;
export const MAX_ARCHIVE_RUNS = 200;
const MANIFEST = "manifest.json";
const MAX_MANIFEST_BYTES = 1024 * 1024;
/** Problems listed in one answer; past this, one more line says how many were left out. */
const MAX_PROBLEMS = 100;

export interface ArchiveFile {
  kind: FileKind;
  originalName: string;
  /** Read from the bytes on import (never taken from the archive). */
  contentType: string;
  /** Measured-data CSVs: recomputed from the bytes on import. */
  summary: MeasuredFileSummary | null;
  createdAt: Date;
  /** Name of who uploaded it, for the record (accounts do not travel between teams). */
  uploadedBy: string | null;
  bytes: Uint8Array;
}

export interface ArchiveRun {
  settings: Record<string, unknown>;
  status: SimulationRunStatus;
  failureReason: string | null;
  failureMessage: string | null;
  timeReached: number;
  summary: RunSummary;
  pointCount: number;
  energyDrift: number | null;
  modelHash: string;
  createdAt: Date;
  createdBy: string | null;
  trajectory: StoredTrajectory;
}

export interface NotebookArchiveContents {
  title: string;
  status: DerivationStatus;
  document: DerivationDocument;
  files: ArchiveFile[];
  runs: ArchiveRun[];
}

export interface ArchiveProblem {
  /** The archive entry (and field inside it) the problem is about, e.g. `document.json: cells[2].kind`. */
  path: string;
  message: string;
}

/** Everything wrong with an archive, found in one pass. */
export class NotebookArchiveError extends Error {
  constructor(readonly problems: ArchiveProblem[]) {
    super(problems.length === 1 ? `${problems[0]!.path}: ${problems[0]!.message}` : `${problems.length} problems in the archive`);
    this.name = "NotebookArchiveError";
  }
}

export interface ArchiveLimits {
  /** Largest total of the entries once unpacked, in bytes. */
  maxUnpackedBytes: number;
  /** Largest attached file per kind, in bytes (the upload limits). */
  maxFileBytes: Record<FileKind, number>;
}

function sha256(bytes: Uint8Array): string {
  return createHash("sha256").update(bytes).digest("hex");
}

const json = (value: unknown, indent?: number) => strToU8(`${JSON.stringify(value, null, indent)}\n`);

// ---------------------------------------------------------------------------
// Manifest

const entrySchema = z.strictObject({
  path: z.string().regex(/^[A-Za-z0-9][\w.\- ()]{0,150}(\/[\w.\- ()]{1,150}){0,2}$/, "not a valid entry name"),
  sizeBytes: z.number().int().min(0),
  sha256: z.string().regex(/^[0-9a-f]{64}$/, "not a SHA-256 in hex"),
});

const summarySchema = z.strictObject({
  timeUnit: z.string().max(40),
  columns: z.array(z.strictObject({ coordinate: z.string().max(64), unit: z.string().max(40), targetUnit: z.string().max(40) })).max(100),
  rowCount: z.number().int().min(0),
  timeSpan: z.strictObject({ start: z.number(), end: z.number() }),
});

const fileEntrySchema = entrySchema.extend({
  kind: z.enum(fileKinds),
  originalName: z.string().min(1).max(200),
  contentType: z.string().max(100),
  summary: summarySchema.nullable(),
  createdAt: z.iso.datetime({ offset: true }),
  uploadedBy: z.string().max(200).nullable(),
});

const manifestSchema = z.strictObject({
  format: z.literal(NOTEBOOK_ARCHIVE_FORMAT, { error: `not a notebook archive (format must be "${NOTEBOOK_ARCHIVE_FORMAT}")` }),
  version: z.number().int().min(1),
  exportedAt: z.iso.datetime({ offset: true }),
  derivation: z.strictObject({ title: z.string().trim().min(1).max(160), status: z.enum(derivationStatuses) }),
  document: entrySchema,
  files: z.array(fileEntrySchema).max(MAX_ARCHIVE_FILES, `at most ${MAX_ARCHIVE_FILES} files`),
  runs: z.array(entrySchema).max(MAX_ARCHIVE_RUNS, `at most ${MAX_ARCHIVE_RUNS} runs`),
});
type Manifest = z.infer<typeof manifestSchema>;

const runSchema = z.strictObject({
  settings: z.record(z.string(), z.unknown()),
  status: z.enum(simulationRunStatuses),
  failureReason: z.string().max(200).nullable(),
  failureMessage: z.string().max(2000).nullable(),
  timeReached: z.number(),
  summary: z.record(z.string(), z.unknown()),
  pointCount: z.number().int().min(0),
  energyDrift: z.number().nullable(),
  modelHash: z.string().regex(/^[0-9a-f]{64}$/, "not a SHA-256 in hex"),
  createdAt: z.iso.datetime({ offset: true }),
  createdBy: z.string().max(200).nullable(),
  // Checked by hand below: millions of numbers are faster to walk than to parse with a schema.
  trajectory: z.unknown(),
});

function issuePath(path: readonly PropertyKey[]): string {
  return path.reduce<string>((text, key) => (typeof key === "number" ? `${text}[${key}]` : text === "" ? String(key) : `${text}.${String(key)}`), "");
}

function zodProblems(entry: string, error: z.ZodError): ArchiveProblem[] {
  return error.issues.map((issue) => ({ path: issue.path.length > 0 ? `${entry}: ${issuePath(issue.path)}` : entry, message: issue.message }));
}

/** Numbers (null stands for a value that was not finite, as JSON writes it). */
function numericColumn(value: unknown, length: number | null): string | null {
  if (!Array.isArray(value)) return "must be an array of numbers";
  if (length !== null && value.length !== length) return `has ${value.length} values; the times have ${length}`;
  for (let i = 0; i < value.length; i++) {
    const v: unknown = value[i];
    if (v !== null && typeof v !== "number") return `value ${i} is not a number`;
  }
  return null;
}

function trajectoryProblems(entry: string, value: unknown): { trajectory: StoredTrajectory | null; problems: ArchiveProblem[] } {
  const problems: ArchiveProblem[] = [];
  const at = (field: string, message: string) => problems.push({ path: `${entry}: trajectory.${field}`, message });
  if (typeof value !== "object" || value === null) return { trajectory: null, problems: [{ path: `${entry}: trajectory`, message: "missing" }] };
  const t = value as Record<string, unknown>;
  const names = t.coordinateNames;
  if (!Array.isArray(names) || names.some((name) => typeof name !== "string")) at("coordinateNames", "must be a list of names");
  const timesProblem = numericColumn(t.times, null);
  if (timesProblem) at("times", timesProblem);
  else if ((t.times as unknown[]).some((time) => time === null)) at("times", "every time must be a number");
  const length = timesProblem ? null : (t.times as unknown[]).length;
  for (const field of ["coordinates", "rates"] as const) {
    const columns = t[field];
    if (!Array.isArray(columns) || (Array.isArray(names) && columns.length !== names.length)) {
      at(field, "must hold one column per coordinate");
      continue;
    }
    columns.forEach((column, i) => {
      const problem = numericColumn(column, length);
      if (problem) at(`${field}[${i}]`, problem);
    });
  }
  if (t.energy !== null) {
    const problem = numericColumn(t.energy, length);
    if (problem) at("energy", `${problem} (or null)`);
  }
  // Runs of models with outputs and constraints keep those series too (older runs have neither field).
  if (t.outputs !== undefined) {
    if (!Array.isArray(t.outputs)) at("outputs", "must be a list of outputs");
    else
      (t.outputs as unknown[]).forEach((output, i) => {
        const o = (typeof output === "object" && output !== null ? output : {}) as Record<string, unknown>;
        if (typeof o.name !== "string") at(`outputs[${i}].name`, "must be a name");
        if (o.unit !== null && typeof o.unit !== "string") at(`outputs[${i}].unit`, "must be a unit or null");
        const problem = numericColumn(o.values, length);
        if (problem) at(`outputs[${i}].values`, problem);
        const peak = o.peak as Record<string, unknown> | null | undefined;
        if (peak !== null && (typeof peak !== "object" || typeof peak.value !== "number" || typeof peak.time !== "number")) {
          at(`outputs[${i}].peak`, "must be { value, time } or null");
        }
      });
  }
  if (t.constraints !== undefined && t.constraints !== null) {
    const c = (typeof t.constraints === "object" ? t.constraints : {}) as Record<string, unknown>;
    for (const field of ["names", "multiplierNames"] as const) {
      const list = c[field];
      if (!Array.isArray(list) || list.some((name) => typeof name !== "string")) at(`constraints.${field}`, "must be a list of names");
    }
    for (const field of ["multipliers", "residuals", "rateResiduals"] as const) {
      const columns = c[field];
      if (!Array.isArray(columns)) {
        at(`constraints.${field}`, "must be a list of columns");
        continue;
      }
      columns.forEach((column, i) => {
        const problem = numericColumn(column, length);
        if (problem) at(`constraints.${field}[${i}]`, problem);
      });
    }
  }
  const extra = Object.keys(t).filter((key) => !["coordinateNames", "times", "coordinates", "rates", "energy", "outputs", "constraints"].includes(key));
  if (extra.length > 0) at(extra[0]!, "unknown field");
  return { trajectory: problems.length === 0 ? (value as StoredTrajectory) : null, problems };
}

// ---------------------------------------------------------------------------
// Writing

const pad = (n: number) => String(n).padStart(3, "0");

/**
 * The archive of a notebook, its runs and its files. Images are stored as
 * they are (already compressed); everything else is deflated.
 */
export function writeNotebookArchive(contents: NotebookArchiveContents, { exportedAt }: { exportedAt: Date }): Uint8Array {
  const mtime = exportedAt;
  const entries: Zippable = {};
  const documentBytes = json(contents.document, 2);
  entries["document.json"] = [documentBytes, { mtime }];
  const runs = contents.runs.map((run, index) => {
    const path = `runs/${pad(index + 1)}.json`;
    const bytes = json({ ...run, createdAt: run.createdAt.toISOString() });
    entries[path] = [bytes, { mtime }];
    return { path, sizeBytes: bytes.byteLength, sha256: sha256(bytes) };
  });
  const files = contents.files.map((file, index) => {
    const path = `files/${pad(index + 1)}-${safeFileName(file.originalName, "file")}`;
    entries[path] = [file.bytes, { mtime, level: file.kind === "image" ? 0 : 6 }];
    return {
      path,
      sizeBytes: file.bytes.byteLength,
      sha256: sha256(file.bytes),
      kind: file.kind,
      originalName: file.originalName,
      contentType: file.contentType,
      summary: file.summary,
      createdAt: file.createdAt.toISOString(),
      uploadedBy: file.uploadedBy,
    };
  });
  const manifest: Manifest = {
    format: NOTEBOOK_ARCHIVE_FORMAT,
    version: NOTEBOOK_ARCHIVE_VERSION,
    exportedAt: exportedAt.toISOString(),
    derivation: { title: contents.title, status: contents.status },
    document: { path: "document.json", sizeBytes: documentBytes.byteLength, sha256: sha256(documentBytes) },
    files,
    runs,
  };
  // The manifest first, so a reader listing the zip sees what it is.
  return zipSync({ [MANIFEST]: [json(manifest, 2), { mtime }], ...entries });
}

/** Total bytes of an archive's entries once unpacked (for the export-side limit). */
export function unpackedSize(contents: NotebookArchiveContents): number {
  return (
    json(contents.document, 2).byteLength +
    contents.files.reduce((sum, file) => sum + file.bytes.byteLength, 0) +
    contents.runs.reduce((sum, run) => sum + json({ ...run, createdAt: run.createdAt.toISOString() }).byteLength, 0)
  );
}

// ---------------------------------------------------------------------------
// Reading

function readManifest(bytes: Uint8Array): Manifest {
  let unpacked: Record<string, Uint8Array>;
  let declared = 0;
  try {
    unpacked = unzipSync(bytes, {
      filter: (file) => {
        if (file.name !== MANIFEST) return false;
        declared = file.originalSize;
        return file.originalSize <= MAX_MANIFEST_BYTES;
      },
    });
  } catch {
    throw new NotebookArchiveError([{ path: "archive", message: "not a zip file (export the notebook again, or choose the .notebook.zip file)" }]);
  }
  const manifestBytes = unpacked[MANIFEST];
  if (!manifestBytes) {
    const message = declared > MAX_MANIFEST_BYTES ? `larger than ${MAX_MANIFEST_BYTES} bytes` : "missing: this zip is not a notebook archive";
    throw new NotebookArchiveError([{ path: MANIFEST, message }]);
  }
  let raw: unknown;
  try {
    raw = JSON.parse(new TextDecoder("utf-8", { fatal: true }).decode(manifestBytes));
  } catch {
    throw new NotebookArchiveError([{ path: MANIFEST, message: "not JSON" }]);
  }
  if (
    typeof raw === "object" &&
    raw !== null &&
    typeof (raw as { version?: unknown }).version === "number" &&
    (raw as { version: number }).version > NOTEBOOK_ARCHIVE_VERSION
  ) {
    const version = (raw as { version: number }).version;
    throw new NotebookArchiveError([
      {
        path: `${MANIFEST}: version`,
        message: `written by a newer version of Holonomy (archive version ${version}; this one reads up to ${NOTEBOOK_ARCHIVE_VERSION})`,
      },
    ]);
  }
  const parsed = manifestSchema.safeParse(raw);
  if (!parsed.success) throw new NotebookArchiveError(zodProblems(MANIFEST, parsed.error));
  return parsed.data;
}

function parseJsonEntry(path: string, bytes: Uint8Array, problems: ArchiveProblem[]): unknown {
  try {
    return JSON.parse(new TextDecoder("utf-8", { fatal: true }).decode(bytes));
  } catch {
    problems.push({ path, message: "not JSON" });
    return undefined;
  }
}

/** The coordinates a measured file was checked against when it was uploaded (from its summary). */
function coordinatesOfSummary(summary: MeasuredFileSummary): { name: string; unit: string }[] {
  return summary.columns.map((column) => ({ name: column.coordinate, unit: column.targetUnit }));
}

/**
 * Reads and checks a notebook archive: the manifest, then every entry it lists
 * (size, SHA-256, content). Throws NotebookArchiveError with every problem
 * found; returns the contents only when there is none.
 */
export function readNotebookArchive(bytes: Uint8Array, limits: ArchiveLimits): NotebookArchiveContents {
  const manifest = readManifest(bytes);
  const problems: ArchiveProblem[] = [];

  // Every entry the manifest lists, once, within the limits before anything is unpacked.
  const wanted = new Map<string, { sizeBytes: number; sha256: string }>();
  for (const entry of [manifest.document, ...manifest.runs, ...manifest.files]) {
    if (entry.path === MANIFEST || wanted.has(entry.path)) problems.push({ path: entry.path, message: "listed more than once in the manifest" });
    else wanted.set(entry.path, entry);
  }
  for (const file of manifest.files) {
    const limit = limits.maxFileBytes[file.kind];
    if (file.sizeBytes > limit)
      problems.push({
        path: file.path,
        message: `${file.sizeBytes} bytes; the limit for ${file.kind === "image" ? "an image" : "a measured-data file"} is ${limit}`,
      });
  }
  const declaredTotal = [...wanted.values()].reduce((sum, entry) => sum + entry.sizeBytes, 0);
  if (declaredTotal > limits.maxUnpackedBytes) {
    problems.push({ path: "archive", message: `its contents come to ${declaredTotal} bytes unpacked; the limit is ${limits.maxUnpackedBytes}` });
    throw new NotebookArchiveError(problems);
  }

  // Unpack only the listed entries, and only when the zip declares the size the manifest does.
  const sizeMismatch = new Map<string, number>();
  let unpacked: Record<string, Uint8Array>;
  try {
    unpacked = unzipSync(bytes, {
      filter: (file) => {
        const entry = wanted.get(file.name);
        if (!entry) return false;
        if (file.originalSize !== entry.sizeBytes) {
          sizeMismatch.set(file.name, file.originalSize);
          return false;
        }
        return true;
      },
    });
  } catch {
    throw new NotebookArchiveError([...problems, { path: "archive", message: "the zip is damaged and cannot be unpacked" }]);
  }
  const entryBytes = (path: string): Uint8Array | null => {
    const entry = wanted.get(path)!;
    const data = unpacked[path];
    if (!data) {
      const size = sizeMismatch.get(path);
      problems.push({ path, message: size === undefined ? "missing from the archive" : `${size} bytes in the zip; the manifest says ${entry.sizeBytes}` });
      return null;
    }
    if (data.byteLength !== entry.sizeBytes || sha256(data) !== entry.sha256) {
      problems.push({ path, message: "damaged: its content does not match the SHA-256 in the manifest" });
      return null;
    }
    return data;
  };

  // The document.
  let document: DerivationDocument | null = null;
  const documentBytes = wanted.get(manifest.document.path) ? entryBytes(manifest.document.path) : null;
  if (documentBytes) {
    const raw = parseJsonEntry(manifest.document.path, documentBytes, problems);
    if (raw !== undefined) {
      const parsed = parseStoredDocument(raw);
      if (parsed.ok) document = parsed.document;
      else
        for (const issue of parsed.issues)
          problems.push({ path: issue.path ? `${manifest.document.path}: ${issue.path}` : manifest.document.path, message: issue.message });
    }
  }

  // The runs.
  const runs: ArchiveRun[] = [];
  for (const entry of manifest.runs) {
    const data = wanted.get(entry.path) === entry ? entryBytes(entry.path) : null;
    if (!data) continue;
    const raw = parseJsonEntry(entry.path, data, problems);
    if (raw === undefined) continue;
    const parsed = runSchema.safeParse(raw);
    if (!parsed.success) {
      problems.push(...zodProblems(entry.path, parsed.error));
      continue;
    }
    const { trajectory, problems: found } = trajectoryProblems(entry.path, parsed.data.trajectory);
    problems.push(...found);
    if (!trajectory) continue;
    if (parsed.data.pointCount !== trajectory.times.length) {
      problems.push({ path: `${entry.path}: pointCount`, message: `says ${parsed.data.pointCount}; the trajectory has ${trajectory.times.length} points` });
      continue;
    }
    runs.push({ ...parsed.data, createdAt: new Date(parsed.data.createdAt), trajectory });
  }

  // The files: checked as an upload is, and the stored facts recomputed from the bytes.
  const files: ArchiveFile[] = [];
  for (const entry of manifest.files) {
    const data = wanted.get(entry.path) === entry && entry.sizeBytes <= limits.maxFileBytes[entry.kind] ? entryBytes(entry.path) : null;
    if (!data) continue;
    const base = {
      kind: entry.kind,
      originalName: safeFileName(entry.originalName, entry.kind === "image" ? "image" : "measured.csv"),
      createdAt: new Date(entry.createdAt),
      uploadedBy: entry.uploadedBy,
      bytes: data,
    };
    if (entry.kind === "image") {
      const type = imageTypeOf(data);
      if (!type) {
        problems.push({ path: entry.path, message: looksLikeMarkup(data) ? "markup images (SVG, HTML) are not accepted" : "not a PNG, JPEG or WebP image" });
        continue;
      }
      files.push({ ...base, contentType: type, summary: null });
      continue;
    }
    if (!entry.summary) {
      problems.push({
        path: `${MANIFEST}: files[${manifest.files.indexOf(entry)}].summary`,
        message: "a measured-data file needs the summary it was uploaded with",
      });
      continue;
    }
    try {
      // Checked against the coordinates it was uploaded against: the document may have moved on since.
      const summary = summariseMeasuredCsv(decodeCsv(data), coordinatesOfSummary(entry.summary), limits.maxFileBytes.measured_csv);
      files.push({ ...base, contentType: "text/csv; charset=utf-8", summary });
    } catch (error) {
      if (error instanceof MeasuredDataError) problems.push({ path: entry.path, message: error.toLine() });
      else if (error instanceof UploadError) problems.push({ path: entry.path, message: error.message });
      else throw error;
    }
  }

  if (problems.length > 0 || !document) {
    if (problems.length > MAX_PROBLEMS) {
      const left = problems.length - MAX_PROBLEMS;
      problems.splice(MAX_PROBLEMS, left, { path: "archive", message: `and ${left} more problems` });
    }
    throw new NotebookArchiveError(problems);
  }
  return { title: manifest.derivation.title, status: manifest.derivation.status, document, files, runs };
}
