import { describe, expect, it } from "vitest";
import { safetyNote } from "@/lib/domain";
import type { ReportStudy } from "@/lib/history/views";
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

/** A grid study of the crane's load mass and rope length, with names and texts people typed that try to break out of the HTML. */
function craneStudy(): ReportStudy {
  return {
    cellId: "study-cell",
    title: `Rope sway <b>check</b>`,
    mode: "grid",
    createdAt: "2026-12-01T09:00:00.000Z",
    total: 6,
    done: 5,
    failed: 1,
    onThisRevision: true,
    parameters: [
      { name: "m", unit: "kg", grid: [500, 1000, 1500] },
      { name: "l", unit: "m", grid: [4, 8] },
    ],
    cases: ["stop from 1 m/s", hostile],
    worst: [{ name: "sway", unit: "rad", value: 0.123456789, time: 1.5, caseName: hostile, parameters: { m: 1500, l: 8 } }],
    sensitivity: [
      {
        name: "sway",
        method: "finite-difference",
        byParameter: { m: { slope: 2e-5, normalized: 0.4, r2: null }, l: { slope: 0.01, normalized: 0.6, r2: null } },
      },
    ],
    failedRuns: [{ index: 4, caseName: "stop from 1 m/s", parameters: { m: 1500, l: 4 }, reason: "setup", message: `singular mass matrix ${hostile}` }],
  };
}

describe("reportHtml with a parameter study", () => {
  async function renderWithStudy(study: ReportStudy) {
    const report = { ...(await craneReport()), studies: [study] };
    return reportHtml({
      report,
      title: "Gantry crane",
      teamName: "Kestrel",
      generatedAt: "2026-12-02T12:00:00.000Z",
      threads: [],
      revisionLabel: "Checkpoint",
    });
  }

  it("prints the study's summary, varied parameters, worst cases, sensitivity and failed runs in the runs section", async () => {
    const html = await renderWithStudy(craneStudy());
    const runs = html.slice(html.indexOf('id="report-runs"'), html.indexOf('id="report-approval"'));
    expect(runs).toContain('<div id="report-studies"><h3>Parameter studies</h3>');
    expect(runs).toContain(`<h3>${escapeHtml("Rope sway <b>check</b>")}</h3>`);
    expect(runs).toContain("Grid study of m, l over 2 cases (stop from 1 m/s, ");
    expect(runs).toContain(": 6 runs, 5 done, 1 failed; ");
    expect(runs).toContain(", on this revision.");
    expect(runs).toContain("<td>m [kg]</td><td>grid: 500, 1000, 1500 kg</td>");
    // The worst case: the peak to six significant digits, the run's case and its parameters with units.
    expect(runs).toContain(`<td>sway [rad]</td><td>0.123457</td><td>1.5</td><td>${escapeHtml(hostile)}</td><td>m = 1500 kg, l = 8 m</td>`);
    expect(runs).toContain('<th scope="col">m: slope · normalized</th>');
    expect(runs).toContain("<td>sway</td><td>2.000e-5 · 0.4</td><td>0.01 · 0.6</td>");
    expect(runs).toContain(`<td>4</td><td>stop from 1 m/s</td><td>m = 1500 kg, l = 4 m</td><td>${escapeHtml(`singular mass matrix ${hostile}`)}</td>`);
    expect(runs).toContain("finite differences along the grid");
  });

  it("escapes every text people typed in a study", async () => {
    const html = await renderWithStudy(craneStudy());
    expect(html).not.toMatch(/<script/i);
    expect(html).not.toContain("<img");
    expect(html).not.toContain("<b>check</b>");
  });

  it("says how many failed runs it leaves out, and prints a tolerance study's regression columns and distributions", async () => {
    const study: ReportStudy = {
      ...craneStudy(),
      title: "Tolerance on the load",
      mode: "tolerance",
      total: 200,
      done: 170,
      failed: 30,
      parameters: [{ name: "m", unit: "kg", distribution: "normal", mean: 1000, sd: 50, min: 900, max: 1100 }],
      sensitivity: [{ name: "sway", method: "regression", byParameter: { m: { slope: 3e-5, normalized: 0.9, r2: 0.97 } } }],
    };
    const html = await renderWithStudy(study);
    expect(html).toContain("Tolerance study of m over 2 cases");
    expect(html).toContain("<td>normal, mean 1000 kg, standard deviation 50 kg, kept within 900 to 1100 kg</td>");
    expect(html).toContain("<td>sway</td><td>3.000e-5 · 0.9 · 0.97</td>");
    expect(html).toContain("The first 1 of 30 failed runs are listed.");
    expect(html).toContain("least squares over the sampled runs");
  });

  it("leaves the studies out when the revision has none", async () => {
    const report = await craneReport();
    const html = reportHtml({ report, title: "x", teamName: "", generatedAt: "2026-12-02T12:00:00.000Z", threads: [], revisionLabel: "Checkpoint" });
    expect(html).not.toContain('id="report-studies"');
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
