// @vitest-environment jsdom
import { describe, expect, it } from "vitest";
import { renderNoteHtml } from "@/components/notebook/markdown";

describe("note images", () => {
  it("keeps an image attached to the derivation (same-origin file route)", () => {
    const html = renderNoteHtml("![Hoist sketch](/api/files/0b6a3c1e-58d2-4f0e-9a55-3f7c2b1d9e10)")!;
    expect(html).toContain('<img src="/api/files/0b6a3c1e-58d2-4f0e-9a55-3f7c2b1d9e10" alt="Hoist sketch">');
  });

  it("replaces an outside or data image by its alt text", () => {
    for (const src of ["https://example.com/track.png", "//example.com/a.png", "data:image/png;base64,AAAA", "/api/files/../../etc"]) {
      const html = renderNoteHtml(`![Rig photo](${src})`)!;
      expect(html).not.toContain("<img");
      expect(html).toContain("Rig photo");
    }
  });
});
