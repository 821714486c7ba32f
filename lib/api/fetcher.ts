import { AppError, appErrorFromBody } from "@/lib/errors";

/**
 * fetch for client components: JSON in, JSON out, and any error response turned
 * back into the same AppError the server threw (code, message, field errors).
 * A FormData body is sent as multipart/form-data instead of JSON.
 */
export async function apiFetch<T>(
  path: string,
  init?: { method?: string; body?: unknown; signal?: AbortSignal; headers?: Record<string, string> },
): Promise<T> {
  // A FormData body (an upload) goes as it is, with the browser's multipart boundary.
  const form = typeof FormData !== "undefined" && init?.body instanceof FormData ? init.body : null;
  const json = init?.body !== undefined && !form;
  let response: Response;
  try {
    response = await fetch(path, {
      method: init?.method ?? "GET",
      headers: { ...(json ? { "content-type": "application/json" } : {}), ...init?.headers },
      body: form ?? (json ? JSON.stringify(init?.body) : undefined),
      signal: init?.signal,
      credentials: "same-origin",
    });
  } catch (error) {
    throw new AppError("unavailable:api", "The server could not be reached. Check your connection.", { cause: error });
  }
  const text = await response.text();
  let body: unknown = undefined;
  if (text) {
    try {
      body = JSON.parse(text);
    } catch {
      body = undefined;
    }
  }
  if (!response.ok) throw appErrorFromBody(body, response.status);
  return body as T;
}
