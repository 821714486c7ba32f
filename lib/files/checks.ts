/**
 * Checks on uploaded files before anything is stored: what an image really is
 * (from its first bytes, never from the name or the browser's claim), and
 * whether a measured-data CSV reads against the derivation's coordinates.
 */
import { parseMeasuredCsv } from "@/lib/simulate";
import type { MeasuredFileSummary } from "@/db/schema";

export type ImageType = "image/png" | "image/jpeg" | "image/webp";

const startsWith = (bytes: Uint8Array, prefix: readonly number[], offset = 0) =>
  bytes.length >= offset + prefix.length && prefix.every((value, i) => bytes[offset + i] === value);

/**
 * The image type from the file signature: PNG (89 50 4E 47 0D 0A 1A 0A),
 * JPEG (FF D8 FF), WebP (RIFF….WEBP). Anything else, SVG included (it can
 * carry script), is null.
 */
export function imageTypeOf(bytes: Uint8Array): ImageType | null {
  if (startsWith(bytes, [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a])) return "image/png";
  if (startsWith(bytes, [0xff, 0xd8, 0xff])) return "image/jpeg";
  if (startsWith(bytes, [0x52, 0x49, 0x46, 0x46]) && startsWith(bytes, [0x57, 0x45, 0x42, 0x50], 8)) return "image/webp";
  return null;
}

/** True when the bytes look like SVG or other markup (refused with a specific message). */
export function looksLikeMarkup(bytes: Uint8Array): boolean {
  const head = new TextDecoder("utf-8", { fatal: false }).decode(bytes.subarray(0, 512)).trimStart().toLowerCase();
  return head.startsWith("<?xml") || head.startsWith("<svg") || head.startsWith("<!doctype") || head.startsWith("<html");
}

export class UploadError extends Error {
  constructor(
    readonly code: "encoding",
    message: string,
  ) {
    super(message);
    this.name = "UploadError";
  }
}

/** UTF-8 text of a CSV (a leading byte-order mark dropped); invalid UTF-8 is refused. */
export function decodeCsv(bytes: Uint8Array): string {
  let text: string;
  try {
    text = new TextDecoder("utf-8", { fatal: true }).decode(bytes);
  } catch {
    throw new UploadError("encoding", "the file is not UTF-8 text; save the CSV as UTF-8");
  }
  return text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;
}

/**
 * Parses a measured-data CSV against the derivation's coordinates and
 * summarises it; throws `MeasuredDataError` (with the line) when it does not read.
 */
export function summariseMeasuredCsv(text: string, coordinates: readonly { name: string; unit?: string }[], maxBytes: number): MeasuredFileSummary {
  const data = parseMeasuredCsv(text, { coordinates, maxBytes });
  return {
    timeUnit: data.timeUnit,
    columns: data.series.map((s) => ({ coordinate: s.coordinate, unit: s.unit, targetUnit: s.targetUnit })),
    rowCount: data.times.length,
    timeSpan: { start: data.times[0]!, end: data.times[data.times.length - 1]! },
  };
}
