import { strFromU8, strToU8, unzipSync, zipSync } from "fflate";
import { createHash } from "node:crypto";
import { describe, expect, it } from "vitest";
import {
  NotebookArchiveError,
  readNotebookArchive,
  unpackedSize,
  writeNotebookArchive,
  type ArchiveLimits,
  type NotebookArchiveContents,
} from "@/lib/derivations/archive-format";
import { blankDocument } from "@/lib/notebook/document";

const limits: ArchiveLimits = { maxUnpackedBytes: 1024 * 1024, maxFileBytes: { measured_csv: 64 * 1024, image: 64 * 1024 } };

// Seat-rig carriage, invented numbers: one coordinate z in metres.
const csv = "t [s], z [mm]\n0, 10\n0.1, 8\n0.2, 3\n";
const contents: NotebookArchiveContents = {
  title: "Seat rig carriage",
  status: "in_review",
  document: blankDocument(
    "Seat rig carriage",
    (() => {
      let n = 0;
      return () => `cell-${++n}`;
    })(),
  ),
  files: [
    {
      kind: "measured_csv",
      originalName: "rig-run-3.csv",
      contentType: "text/csv; charset=utf-8",
      summary: { timeUnit: "s", columns: [{ coordinate: "z", unit: "mm", targetUnit: "m" }], rowCount: 3, timeSpan: { start: 0, end: 0.2 } },
      createdAt: new Date("2030-03-01T08:00:00.000Z"),
      uploadedBy: "Test analyst",
      bytes: strToU8(csv),
    },
  ],
  runs: [
    {
      settings: { endTime: 0.2, outputStep: 0.1, initialCoordinates: { z: 0.01 } },
      status: "completed",
      failureReason: null,
      failureMessage: null,
      timeReached: 0.2,
      summary: { coordinateUnits: { z: "m" } },
      pointCount: 3,
      energyDrift: null,
      modelHash: "a".repeat(64),
      createdAt: new Date("2030-03-01T09:00:00.000Z"),
      createdBy: null,
      trajectory: { coordinateNames: ["z"], times: [0, 0.1, 0.2], coordinates: [[0.01, 0.008, 0.003]], rates: [[0, -0.03, -0.05]], energy: null },
    },
  ],
};

function problemsOf(bytes: Uint8Array, at: ArchiveLimits = limits) {
  try {
    readNotebookArchive(bytes, at);
  } catch (error) {
    if (error instanceof NotebookArchiveError) return error.problems;
    throw error;
  }
  throw new Error("the archive was accepted");
}

/** The written archive with its manifest edited (and entries replaced). */
interface EditableManifest {
  files: { summary: unknown }[];
  runs: { sizeBytes: number; sha256: string }[];
}

function edited(edit: (manifest: EditableManifest) => void, entries: Record<string, Uint8Array> = {}): Uint8Array {
  const unpacked = unzipSync(writeNotebookArchive(contents, { exportedAt: new Date("2030-03-02T00:00:00.000Z") }));
  const manifest = JSON.parse(strFromU8(unpacked["manifest.json"]!));
  edit(manifest);
  return zipSync({ ...unpacked, ...entries, "manifest.json": strToU8(JSON.stringify(manifest)) });
}

describe("notebook archive format", () => {
  it("reads back what it wrote, the CSV summary recomputed from the bytes", () => {
    const bytes = writeNotebookArchive(contents, { exportedAt: new Date("2030-03-02T00:00:00.000Z") });
    const read = readNotebookArchive(bytes, limits);
    expect(read).toEqual(contents);
    expect(unpackedSize(contents)).toBe(
      Object.entries(unzipSync(bytes)).reduce((sum, [name, data]) => (name === "manifest.json" ? sum : sum + data.byteLength), 0),
    );
  });

  it("reads back a run of a constrained model with its outputs, multipliers and residuals, and names a malformed one", () => {
    // Hoist rope on the seat rig's test frame, invented numbers: one output and one position constraint.
    const run = contents.runs[0]!;
    const constrained: NotebookArchiveContents = {
      ...contents,
      runs: [
        {
          ...run,
          trajectory: {
            ...run.trajectory,
            outputs: [{ name: "tension", unit: "N", values: [98.1, 99.4, 101.2], peak: { value: 101.2, time: 0.2 } }],
            constraints: {
              names: ["rope"],
              multiplierNames: ["lambda_rope"],
              multipliers: [[-49.05, -49.7, -50.6]],
              residuals: [[0, 1e-12, 2e-12]],
              rateResiduals: [],
            },
          },
        },
      ],
    };
    const bytes = writeNotebookArchive(constrained, { exportedAt: new Date("2030-03-02T00:00:00.000Z") });
    expect(readNotebookArchive(bytes, limits)).toEqual(constrained);

    const unpacked = unzipSync(bytes);
    const runEntry = Object.keys(unpacked).find((name) => name.startsWith("runs/"))!;
    const stored = JSON.parse(strFromU8(unpacked[runEntry]!));
    stored.trajectory.outputs[0].values = [1, 2];
    const broken = strToU8(JSON.stringify(stored));
    const manifest = JSON.parse(strFromU8(unpacked["manifest.json"]!));
    manifest.runs[0].sizeBytes = broken.byteLength;
    manifest.runs[0].sha256 = createHash("sha256").update(broken).digest("hex");
    const problems = problemsOf(zipSync({ ...unpacked, [runEntry]: broken, "manifest.json": strToU8(JSON.stringify(manifest)) }));
    expect(problems.map((problem) => problem.path)).toContain(`${runEntry}: trajectory.outputs[0].values`);
  });

  it("refuses contents over the unpacked limit before unpacking them", () => {
    const bytes = writeNotebookArchive(contents, { exportedAt: new Date() });
    expect(problemsOf(bytes, { ...limits, maxUnpackedBytes: 100 })).toEqual([{ path: "archive", message: expect.stringContaining("the limit is 100") }]);
  });

  it("does not trust sizes: an entry larger than its manifest says is not unpacked", () => {
    const bigger = strToU8(`${csv}0.3, 1\n`);
    const problems = problemsOf(edited(() => undefined, { "files/001-rig-run-3.csv": bigger }));
    expect(problems).toEqual([{ path: "files/001-rig-run-3.csv", message: `${bigger.byteLength} bytes in the zip; the manifest says ${csv.length}` }]);
  });

  it("refuses an entry listed twice, a measured file without its summary and a run whose point count is off", () => {
    const problems = problemsOf(
      edited((manifest) => {
        manifest.files[0]!.summary = null;
        manifest.runs.push({ ...manifest.runs[0]! });
      }),
    );
    expect(problems).toEqual([
      { path: "runs/001.json", message: "listed more than once in the manifest" },
      { path: "manifest.json: files[0].summary", message: "a measured-data file needs the summary it was uploaded with" },
    ]);
    const run = { ...contents.runs[0]!, createdAt: contents.runs[0]!.createdAt.toISOString(), pointCount: 4 };
    const runBytes = strToU8(JSON.stringify(run));
    const miscounted = edited(
      (manifest) => {
        manifest.runs[0]!.sizeBytes = runBytes.byteLength;
        manifest.runs[0]!.sha256 = createHash("sha256").update(runBytes).digest("hex");
      },
      { "runs/001.json": runBytes },
    );
    expect(problemsOf(miscounted)).toEqual([{ path: "runs/001.json: pointCount", message: "says 4; the trajectory has 3 points" }]);
  });

  it("names what is wrong with a manifest that is not one", () => {
    const problems = problemsOf(zipSync({ "manifest.json": strToU8(JSON.stringify({ format: "something-else", version: 1 })) }));
    expect(problems.map((problem) => problem.path)).toEqual(expect.arrayContaining(["manifest.json: format", "manifest.json: document"]));
    expect(problemsOf(zipSync({ "notes.txt": strToU8("hello") }))).toEqual([{ path: "manifest.json", message: "missing: this zip is not a notebook archive" }]);
  });
});
