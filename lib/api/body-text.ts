import { AppError } from "@/lib/errors";

/**
 * Most bytes a JSON body may have: what the proxy hands on to route handlers
 * (Next.js cuts a longer body at 10 MB), so a longer one is refused as too
 * large instead of being misread as malformed.
 */
export const JSON_BODY_LIMIT = 10 * 1024 * 1024;

function tooLarge(limit: number): AppError {
  const size = limit >= 1024 * 1024 ? `${Math.round((limit / (1024 * 1024)) * 10) / 10} MB` : `${Math.round(limit / 1024)} kB`;
  return new AppError("too_large:api", `The request body is larger than ${size}.`, { details: { limitBytes: limit } });
}

/** The body as text, never more than `limit` bytes: a declared or counted length past it is a 413 and the rest is not read. */
export async function readBodyText(request: Request, limit = JSON_BODY_LIMIT): Promise<string> {
  const declared = request.headers.get("content-length")?.trim();
  if (declared && /^\d+$/.test(declared) && Number(declared) > limit) throw tooLarge(limit);
  if (!request.body) return "";
  const reader = request.body.getReader();
  const decoder = new TextDecoder();
  let received = 0;
  let text = "";
  for (;;) {
    const { done, value } = await reader.read();
    if (done) break;
    received += value.byteLength;
    if (received > limit) {
      await reader.cancel().catch(() => undefined);
      throw tooLarge(limit);
    }
    text += decoder.decode(value, { stream: true });
  }
  return text + decoder.decode();
}
