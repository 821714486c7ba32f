import { contentDisposition } from "@/lib/files/names";

export { fileBaseName } from "@/lib/files/names";

/** A download response with the given type and file name. */
export function downloadResponse(body: string, { filename, contentType }: { filename: string; contentType: string }): Response {
  return new Response(body, {
    status: 200,
    headers: {
      "content-type": `${contentType}; charset=utf-8`,
      "content-disposition": contentDisposition("attachment", filename),
      "x-content-type-options": "nosniff",
      "cache-control": "no-store",
    },
  });
}
