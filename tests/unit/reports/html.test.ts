import { describe, expect, it } from "vitest";
import { safetyNote } from "@/lib/domain";
import { escapeHtml, reportHtml, seriesSvg } from "@/lib/reports/html";
import { reportThreads } from "@/lib/reports/threads";
import { craneReport, thread } from "./fixtures";

const hostile = `<script>alert("x")</script><img src=x onerror=alert(1)>`;

async function renderCrane(overrides: { threads?: ReturnType<typeof reportThreads> | null; title?: string } = {}) {
  const report = await craneReport();
  const kinetic = report.document.cells.find((cell) => cell.kind === "kinetic")!;
  const threads =
    overrides.threads !== undefined
      ? overrides.threads
      : reportThreads(
          [
            thread({
              id: "t1",
              anchor: { kind: "text", cellId: kinetic.id, fieldPath: "expr", start: "", end: "", quote: "1/2*M*x'^2" },
              comments: [
                {
                  id: "c1",
                  authorId: null,
                  authorName: "Priya Anand",
                  body: `Is the hoist mass in M? ${hostile}`,
                  createdAt: "2026-12-01T08:00:00.000Z",
                  editedAt: null,
                  deleted: false,
                  mayEdit: false,
                  mayDelete: false,
                },
              ],
            }),
            thread({
              id: "t2",
              status: "resolved",
              resolvedAt: "2026-12-01T10:00:00.000Z",
              resolvedByName: "Sam Okafor",
              anchor: { kind: "text", cellId: kinetic.id, fieldPath: "expr", start: "", end: "", quote: "" },
            }),
          ],
          report.document,
        );
  return {
    report,
    html: reportHtml({
      report,
      title: overrides.title ?? "Gantry crane",
      teamName: "Kestrel Lift & Motion",
      generatedAt: "2026-12-02T12:00:00.000Z",
      threads,
      revisionLabel: "Before the rope test",
    }),
  };
}

describe("reportHtml", () => {
  it("is one self-contained page: no script, no external resource, mathematics as MathML", async () => {
    const { html, report } = await renderCrane();
    expect(html.startsWith("<!doctype html>")).toBe(true);
    expect(html).not.toMatch(/<script/i);
    expect(html).not.toMatch(/\b(src|href)=["']?https?:/i);
    expect(html).not.toMatch(/<link\b/i);
    // One display per equation of motion, as MathML.
    expect(html.match(/<math[^>]*display="block"/g)!.length).toBeGreaterThanOrEqual(report.evaluation.ok ? report.evaluation.result.equations.length : 1);
    expect(html).toContain("Kestrel Lift &amp; Motion");
    expect(html).toContain("SHA-256 " + "ab".repeat(32));
  });

  it("carries every section of the report page, the run plots and the safety note", async () => {
    const { html } = await renderCrane();
    for (const id of [
      "report-model",
      "report-equations",
      "report-conserved",
      "report-linearization",
      "report-checks",
      "report-runs",
      "report-approval",
      "report-threads",
    ]) {
      expect(html).toContain(`id="${id}"`);
    }
    expect(html).toContain("Run 1: Stop from 1 m/s");
    expect(html.match(/<svg /g)).toHaveLength(2);
    expect(html).toContain(escapeHtml(safetyNote));
    expect(html).toContain("Not approved.");
  });

  it("prints open and resolved comment threads with their anchors, escaping what people wrote", async () => {
    const { html } = await renderCrane();
    expect(html).toContain("1 open, 1 resolved");
    expect(html).toContain("<strong>Open</strong> — Kinetic energy");
    expect(html).toContain("<blockquote>1/2*M*x&#39;^2</blockquote>");
    expect(html).toContain("Resolved by Sam Okafor");
    expect(html).toContain("Is the hoist mass in M? &lt;script&gt;alert(&quot;x&quot;)&lt;/script&gt;&lt;img src=x onerror=alert(1)&gt;");
    expect(html).not.toContain("<img");
  });

  it("escapes the title and leaves the threads out for a reader who may not read comments", async () => {
    const { report } = await craneReport().then((r) => ({ report: { ...r, revision: { ...r.revision, title: hostile } } }));
    const html = reportHtml({ report, title: "x", teamName: "Kestrel", generatedAt: "2026-12-02T12:00:00.000Z", threads: null, revisionLabel: "Checkpoint" });
    expect(html).not.toMatch(/<script/i);
    expect(html).toContain(`<h1>${escapeHtml(hostile)}</h1>`);
    expect(html).not.toContain('id="report-threads"');
  });

  it("writes a model the engine refused as a reason, not a crash", async () => {
    const report = { ...(await craneReport()), evaluation: { ok: false as const, message: "kinetic: unknown name q" } };
    const html = reportHtml({ report, title: "x", teamName: "", generatedAt: "2026-12-02T12:00:00.000Z", threads: [], revisionLabel: "Checkpoint" });
    expect(html).toContain("The engine could not derive this revision: kinetic: unknown name q");
    expect(html).toContain("No comment threads.");
  });
});

describe("seriesSvg", () => {
  it("draws a series with a gap where a value is not finite, and says so when nothing is finite", () => {
    const svg = seriesSvg([0, 1, 2, 3], [0, 1, Number.NaN, 2], "theta", "rad");
    expect(svg.match(/ d="([^"]*)"/)![1]!.match(/M/g)).toHaveLength(2);
    expect(svg).toContain('aria-label="theta in rad against time in s"');
    expect(seriesSvg([0, 1], [Number.NaN, Number.NaN], "x", "m")).toContain("No finite values of x to plot.");
  });
});
