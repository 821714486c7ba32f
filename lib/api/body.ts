import "server-only";
import { AppError } from "@/lib/errors";

/**
 * Reads an upload's body, never more than `limit` bytes. Before reading, a
 * request without a valid Content-Length is refused (411) and one declaring
 * more than the limit gets `tooLarge()` (413); while reading, the bytes are
 * counted and the stream is cancelled as soon as they pass the limit (413) or
 * the declared length (400), so a lying client cannot make the server buffer more.
 *
 * @example const bytes = await readBodyWithin(request, { limit: 5 << 20, tooLarge: () => new AppError("too_large:file") });
 */
export async function readBodyWithin(request: Request, { limit, tooLarge }: { limit: number; tooLarge: () => AppError }): Promise<Uint8Array> {
  const header = request.headers.get("content-length")?.trim() ?? "";
  if (!/^\d{1,15}$/.test(header)) throw new AppError("length_required:api", "Send the upload with a valid Content-Length header.");
  const declared = Number(header);
  if (declared > limit) throw tooLarge();
  if (!request.body) return new Uint8Array(0);

  const reader = request.body.getReader();
  const chunks: Uint8Array[] = [];
  let received = 0;
  for (;;) {
    const { done, value } = await reader.read();
    if (done) break;
    received += value.byteLength;
    if (received > limit || received > declared) {
      await reader.cancel().catch(() => undefined);
      if (received > limit) throw tooLarge();
      throw new AppError("bad_request:api", "The body is longer than its Content-Length.");
    }
    chunks.push(value);
  }
  const body = new Uint8Array(received);
  let offset = 0;
  for (const chunk of chunks) {
    body.set(chunk, offset);
    offset += chunk.byteLength;
  }
  return body;
}

/** Parses bytes already read with readBodyWithin as the request's multipart/form-data (another content type is a 415). */
export async function formDataOf(request: Request, body: Uint8Array): Promise<FormData> {
  const type = request.headers.get("content-type") ?? "";
  if (!/^multipart\/form-data\s*;/i.test(type)) throw new AppError("unsupported_media_type:api", "Send the upload as multipart/form-data.");
  return new Response(body as BodyInit, { headers: { "content-type": request.headers.get("content-type") ?? "" } }).formData();
}
