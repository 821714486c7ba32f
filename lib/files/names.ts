/**
 * File names the server writes into Content-Disposition headers: one built
 * from a title for a download, one cleaned from a name a browser sent with
 * an upload. Both leave nothing that could break out of the quoted header value.
 */

/**
 * A file name from a title: lower case, words joined by `separator`. Code
 * downloads use "_" so the file is a valid module name (Python, Octave).
 *
 * @example fileBaseName("Trolley, for the report") // "trolley-for-the-report"
 */
export function fileBaseName(
  title: string,
  { separator = "-", fallback = "derivation", maxLength = 80 }: { separator?: "-" | "_"; fallback?: string; maxLength?: number } = {},
): string {
  const edges = separator === "-" ? /^-+|-+$/g : /^_+|_+$/g;
  return (
    title
      .toLowerCase()
      .replace(/[^a-z0-9]+/g, separator)
      .replace(edges, "")
      .slice(0, maxLength) || fallback
  );
}

/** An uploaded file's name, safe to store and echo in a header (no path, no quotes or control characters). */
export function safeFileName(name: string, fallback: string): string {
  const base = name.split(/[\\/]/).pop() ?? "";
  const cleaned = base
    .replace(/[^\w.\- ()]+/g, "_")
    .replace(/^\.+/, "")
    .slice(0, 120)
    .trim();
  return cleaned === "" ? fallback : cleaned;
}

/** The Content-Disposition value for a file name (quotes, backslashes and line breaks dropped). */
export function contentDisposition(disposition: "attachment" | "inline", filename: string): string {
  return `${disposition}; filename="${filename.replace(/["\\\r\n]/g, "")}"`;
}
