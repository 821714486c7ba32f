import { describe, expect, it } from "vitest";
import { JSON_BODY_LIMIT, readBodyText } from "@/lib/api/body-text";
import { readOptionalJson } from "@/lib/api/optional-json";
import { readJson } from "@/lib/api/route";
import { AppError } from "@/lib/errors";

const url = "https://holonomy.example/api/derivations/x/studies";

function post(body: BodyInit | null, headers: Record<string, string> = { "content-type": "application/json" }): Request {
  return new Request(url, { method: "POST", body, headers, duplex: "half" } as RequestInit);
}

/** A body sent in chunks without a Content-Length, as a chunked upload arrives. */
function streamed(chunks: string[]): { request: Request; pulled: () => number } {
  let next = 0;
  const stream = new ReadableStream<Uint8Array>({
    pull(controller) {
      if (next === chunks.length) return controller.close();
      controller.enqueue(new TextEncoder().encode(chunks[next++]!));
    },
  });
  return { request: post(stream), pulled: () => next };
}

async function refusal(run: () => Promise<unknown>): Promise<string> {
  try {
    await run();
    return "accepted";
  } catch (error) {
    return error instanceof AppError ? `${error.status} ${error.code}: ${error.message}` : String(error);
  }
}

describe("readJson", () => {
  it("reads a JSON body", async () => {
    expect(await readJson(post('{"cellId":"c1"}'))).toEqual({ cellId: "c1" });
  });

  it("tells malformed JSON from an empty body, both as 400", async () => {
    expect(await refusal(() => readJson(post('{"cellId":')))).toBe("400 bad_request:validation: The request body is not valid JSON.");
    expect(await refusal(() => readJson(post("  ")))).toBe("400 bad_request:validation: The request body is empty: send a JSON object.");
  });

  it("refuses a body declared longer than the limit before reading it (413)", async () => {
    const request = new Request(url, { method: "POST", body: "{}", headers: { "content-type": "application/json", "content-length": String(5000) } });
    expect(await refusal(() => readJson(request, { limit: 4096 }))).toBe("413 too_large:api: The request body is larger than 4 kB.");
  });

  it("stops reading a body without a length as soon as it passes the limit (413)", async () => {
    const { request, pulled } = streamed(['{"cellId":"', "a".repeat(3000), "a".repeat(3000), "a".repeat(3000), '"}']);
    expect(await refusal(() => readJson(request, { limit: 4096 }))).toBe("413 too_large:api: The request body is larger than 4 kB.");
    expect(pulled()).toBeLessThan(5);
  });

  it("defaults to the 10 MB the proxy passes on, so a longer body is too large rather than malformed", async () => {
    expect(JSON_BODY_LIMIT).toBe(10 * 1024 * 1024);
    const { request } = streamed([" ".repeat(6 * 1024 * 1024), " ".repeat(6 * 1024 * 1024), "{}"]);
    expect(await refusal(() => readJson(request))).toBe("413 too_large:api: The request body is larger than 10 MB.");
  });

  it("still refuses a body not declared as JSON with 415 before reading it", async () => {
    expect(await refusal(() => readJson(post("{}", { "content-type": "text/plain" })))).toMatch(/^415 unsupported_media_type:api/);
  });
});

describe("readOptionalJson", () => {
  it("reads an empty body as {} and refuses malformed or oversized ones", async () => {
    expect(await readOptionalJson(post(""))).toEqual({});
    expect(await refusal(() => readOptionalJson(post("{")))).toBe("400 bad_request:validation: The request body is not valid JSON.");
    expect(await refusal(() => readOptionalJson(post("[1]".padEnd(3000, " ")), { limit: 1024 }))).toBe(
      "413 too_large:api: The request body is larger than 1 kB.",
    );
  });
});

describe("readBodyText", () => {
  it("decodes characters split across chunks", async () => {
    const bytes = new TextEncoder().encode('"θ"');
    const stream = new ReadableStream<Uint8Array>({
      start(controller) {
        controller.enqueue(bytes.slice(0, 2));
        controller.enqueue(bytes.slice(2));
        controller.close();
      },
    });
    expect(await readBodyText(post(stream))).toBe('"θ"');
  });
});
