/** A file name from a derivation title: lower case, words joined by "-". */
export function fileBaseName(title: string): string {
  return title.toLowerCase().replace(/[^a-z0-9]+/g, "-").replace(/^-+|-+$/g, "").slice(0, 80) || "derivation";
}

/** A download response with the given type and file name. */
export function downloadResponse(body: string, { filename, contentType }: { filename: string; contentType: string }): Response {
  return new Response(body, {
    status: 200,
    headers: {
      "content-type": `${contentType}; charset=utf-8`,
      "content-disposition": `attachment; filename="${filename.replace(/["\\\r\n]/g, "")}"`,
      "cache-control": "no-store",
    },
  });
}
