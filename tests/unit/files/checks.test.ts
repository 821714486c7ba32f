import { describe, expect, it } from "vitest";
import { MeasuredDataError } from "@/lib/simulate";
import { decodeCsv, imageTypeOf, looksLikeMarkup, summariseMeasuredCsv, UploadError } from "@/lib/files/checks";
import { safeFileName } from "@/lib/files/names";

const bytes = (...values: number[]) => Uint8Array.from(values);
const text = (value: string) => new TextEncoder().encode(value);

describe("image type from the file signature", () => {
  // Signatures from the format specifications: PNG (ISO/IEC 15948, 5.2), JPEG SOI marker
  // followed by a marker (ITU-T T.81, B.1.1.3), WebP RIFF container (RFC 9649, 2.5); section numbers from memory.
  it("recognises PNG, JPEG and WebP", () => {
    expect(imageTypeOf(bytes(0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0))).toBe("image/png");
    expect(imageTypeOf(bytes(0xff, 0xd8, 0xff, 0xe0))).toBe("image/jpeg");
    expect(imageTypeOf(text("RIFF\u0010\u0000\u0000\u0000WEBPVP8 "))).toBe("image/webp");
  });

  it("refuses look-alikes, truncated signatures and markup", () => {
    expect(imageTypeOf(bytes(0x89, 0x50, 0x4e, 0x47))).toBeNull();
    expect(imageTypeOf(text("RIFF\u0010\u0000\u0000\u0000WAVEfmt "))).toBeNull();
    expect(imageTypeOf(text('<svg xmlns="http://www.w3.org/2000/svg"/>'))).toBeNull();
    expect(looksLikeMarkup(text('  <?xml version="1.0"?><svg/>'))).toBe(true);
    expect(looksLikeMarkup(text("t [s], x [m]\n0, 1\n"))).toBe(false);
  });
});

describe("measured CSV checks before storing", () => {
  it("drops a byte-order mark and refuses text that is not UTF-8", () => {
    expect(decodeCsv(Uint8Array.from([0xef, 0xbb, 0xbf, ...text("t [s]")]))).toBe("t [s]");
    expect(() => decodeCsv(bytes(0x74, 0xff, 0xfe, 0x31))).toThrowError(UploadError);
  });

  it("summarises columns, units, rows and time span in seconds", () => {
    const summary = summariseMeasuredCsv("t [ms], x [mm]\n0, 1\n250, 2\n500, 3\n", [{ name: "x", unit: "m" }], 1024);
    expect(summary).toEqual({ timeUnit: "ms", columns: [{ coordinate: "x", unit: "mm", targetUnit: "m" }], rowCount: 3, timeSpan: { start: 0, end: 0.5 } });
  });

  it("passes on the parser's error with its line", () => {
    try {
      summariseMeasuredCsv("t [s], x [m]\n0, 1\n0.5, 2\n0.4, 3\n", [{ name: "x", unit: "m" }], 1024);
      expect.unreachable("non-monotone time must be refused");
    } catch (error) {
      expect(error).toBeInstanceOf(MeasuredDataError);
      expect((error as MeasuredDataError).line).toBe(4);
    }
  });
});

describe("file names echoed in headers", () => {
  it("keeps the base name and strips quotes, paths and control characters", () => {
    expect(safeFileName("C:\\rig\\run 14.csv", "x")).toBe("run 14.csv");
    expect(safeFileName('a"b\r\nc.png', "x")).toBe("a_b_c.png");
    expect(safeFileName("../../..", "fallback.csv")).toBe("fallback.csv");
  });
});
