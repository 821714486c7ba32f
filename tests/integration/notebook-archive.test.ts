import { strFromU8, strToU8, unzipSync, zipSync } from "fflate";
import { createHash } from "node:crypto";
import { afterAll, beforeAll, beforeEach, describe, expect, it, vi } from "vitest";

vi.mock("@/lib/auth/session", async () => (await import("./support/session")).sessionModule);

// Lets one test make the row-writing transaction fail for real inside PostgreSQL
// (an invalid enum value in the runs insert), after the objects were stored.
const failures = vi.hoisted(() => ({ breakNextImport: false }));
vi.mock("@/db/queries/derivations", async (importOriginal) => {
  const original = await importOriginal<typeof import("@/db/queries/derivations")>();
  return {
    ...original,
    createDerivation: (input: Parameters<typeof original.createDerivation>[0]) => {
      if (!failures.breakNextImport) return original.createDerivation(input);
      failures.breakNextImport = false;
      return original.createDerivation({ ...input, runs: (input.runs ?? []).map((run) => ({ ...run, status: "exploded" as never })) });
    },
  };
});

import * as notebookExportRoute from "@/app/api/derivations/[id]/export/notebook/route";
import * as derivationFilesRoute from "@/app/api/derivations/[id]/files/route";
import * as derivationRoute from "@/app/api/derivations/[id]/route";
import * as runRoute from "@/app/api/derivations/[id]/runs/[runId]/route";
import * as runsRoute from "@/app/api/derivations/[id]/runs/route";
import * as fileRoute from "@/app/api/files/[fileId]/route";
import * as notebookImportRoute from "@/app/api/teams/[teamId]/derivations/import/notebook/route";
import { and, count, eq } from "drizzle-orm";
import { closeDatabase, db } from "@/db/client";
import { getAuditEventsByTeamId } from "@/db/queries/audit";
import { createDerivation } from "@/db/queries/derivations";
import { approveRevision, requestReview } from "@/db/queries/reviews";
import { derivations, files, simulationRuns } from "@/db/schema";
import { env } from "@/lib/env";
import type { Model } from "@/lib/mechanics";
import { addCell, blankDocument, createCell, modelToDocument, type DerivationDocument } from "@/lib/notebook/document";
import { INLINE_TRAJECTORY_VALUES } from "@/lib/runs/trajectory";
import { listObjectKeys } from "@/lib/storage";
import { closeSimulationPool } from "@/lib/workers/simulation-pool";
import { formRequest, jsonRequest, makeTeam, params, resetDatabase, type TeamFixture } from "./support/fixtures";
import { signInAs, signOut } from "./support/session";

let kestrel: TeamFixture;
let otherTeam: TeamFixture;

// Gimbal pitch axis on a test stand, as a simple pendulum (point mass on a light arm).
const pendulum: Model = {
  title: "Gimbal pitch arm, archived",
  coordinates: [{ name: "theta", unit: "rad" }],
  parameters: [
    { name: "m", unit: "kg", value: 2.5 },
    { name: "l", unit: "m", value: 1.5 },
    { name: "g", unit: "m/s^2", value: 9.81 },
  ],
  definitions: [
    { name: "xb", expr: "l*sin(theta)" },
    { name: "yb", expr: "-l*cos(theta)" },
  ],
  kinetic: "1/2*m*(xb'^2 + yb'^2)",
  potential: "m*g*yb",
};

/** Everything the model file leaves out: notes, generated cells with their settings, mechanism points, titles, collapsed state. */
function fullNotebook(): DerivationDocument {
  let doc = modelToDocument(pendulum);
  const note = { ...createCell("note"), markdown: "## Rig G-2\nArm released from **20°**; compare with run 14.", title: "Test plan" };
  const linearization = { ...createCell("linearization"), settings: { equilibriumIndex: 1, inputValues: {} } };
  const codeExport = { ...createCell("code-export"), settings: { language: "julia" as const }, collapsed: true };
  const simulation = {
    ...createCell("simulation"),
    settings: {
      initialCoordinates: { theta: "0.35" },
      initialRates: { theta: "0" },
      startTime: "0",
      endTime: "4",
      outputStep: "0.01",
      tolerance: "1e-9",
      inputs: {},
      parameterOverrides: { l: "1.4" },
      points: [{ x: "xb", y: "yb" }],
    },
  };
  for (const cell of [note, linearization, codeExport, simulation]) doc = addCell(doc, cell);
  return addCell(doc, { ...createCell("note"), markdown: "Reviewed against the stand log." }, 0);
}

// Gimbal rig G-2, run 14 (invented data): time in ms, pitch in degrees.
const measuredCsv = ["# Gimbal rig G-2, run 14", "t [ms], theta [deg]", "0, 20.00", "5, 19.96", "10, 19.84", "15, 19.64", ""].join("\n");
// A PNG signature followed by arbitrary bytes (the upload check reads the signature), every byte value included.
const pngBytes = new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, ...Array.from({ length: 256 }, (_, i) => i)]);

async function upload(derivationId: string, name: string, bytes: Uint8Array | string, type: string) {
  const form = new FormData();
  form.set("file", new File([typeof bytes === "string" ? bytes : new Uint8Array(bytes)], name, { type }));
  const response = await derivationFilesRoute.POST(await formRequest(`/api/derivations/${derivationId}/files`, form), params({ id: derivationId }));
  expect(response.status).toBe(201);
  return (await response.json()).file as { id: string };
}

async function exportArchive(id: string): Promise<Response> {
  return notebookExportRoute.GET(jsonRequest(`/api/derivations/${id}/export/notebook`, "GET"), params({ id }));
}

async function importArchive(fixture: TeamFixture, bytes: Uint8Array, { title, key }: { title?: string; key?: string } = {}): Promise<Response> {
  const form = new FormData();
  form.set("file", new File([new Uint8Array(bytes)], "gimbal.notebook.zip", { type: "application/zip" }));
  if (title) form.set("title", title);
  const request = await formRequest(`/api/teams/${fixture.team.id}/derivations/import/notebook`, form);
  if (key) request.headers.set("Idempotency-Key", key);
  return notebookImportRoute.POST(request, params({ teamId: fixture.team.id }));
}

async function runsOf(id: string) {
  const listed = await (await runsRoute.GET(jsonRequest(`/api/derivations/${id}/runs`, "GET"), params({ id }))).json();
  const runs = [];
  for (const summary of listed.runs as { id: string }[]) {
    runs.push((await (await runRoute.GET(jsonRequest(`/api/derivations/${id}/runs/${summary.id}`, "GET"), params({ id, runId: summary.id }))).json()).run);
  }
  return runs;
}

async function filesOf(id: string) {
  const listed = (await (await derivationFilesRoute.GET(jsonRequest(`/api/derivations/${id}/files`, "GET"), params({ id }))).json()).files as {
    id: string;
    kind: string;
    originalName: string;
    contentType: string;
    sizeBytes: number;
    summary: unknown;
    createdAt: string;
  }[];
  return Promise.all(
    listed.map(async (file) => ({
      ...file,
      bytes: new Uint8Array(await (await fileRoute.GET(jsonRequest(`/api/files/${file.id}`, "GET"), params({ fileId: file.id }))).arrayBuffer()),
    })),
  );
}

/** What must survive the round trip of a run (ids, owners and urls are new by design). */
function comparableRun(run: Record<string, unknown>) {
  const { id: _id, derivationId: _derivationId, createdBy: _createdBy, ...rest } = run;
  return rest;
}

async function teamDerivationCount(teamId: string): Promise<number> {
  const [row] = await db.select({ total: count() }).from(derivations).where(eq(derivations.teamId, teamId));
  return row?.total ?? 0;
}

let sourceId: string;
let sourceDocument: DerivationDocument;
let archive: Uint8Array;

beforeAll(async () => {
  await resetDatabase();
  kestrel = await makeTeam("Kestrel archive bay");
  otherTeam = await makeTeam("Partner test house");

  sourceDocument = fullNotebook();
  const created = await createDerivation({
    teamId: kestrel.team.id,
    title: "Gimbal pitch arm, archived",
    ownerId: kestrel.members.analyst.id,
    content: sourceDocument,
  });
  sourceId = created.id;
  signInAs(kestrel.members.analyst);
  await upload(sourceId, "g2-run14.csv", measuredCsv, "text/csv");
  await upload(sourceId, "stand-photo.png", pngBytes, "image/png");
  const small = await runsRoute.POST(
    jsonRequest(`/api/derivations/${sourceId}/runs`, "POST", { label: "small swing", initialCoordinates: { theta: 0.35 }, endTime: 2, outputStep: 0.01 }),
    params({ id: sourceId }),
  );
  expect(small.status).toBe(201);
  // 15 001 points of t, theta, theta' and energy: over INLINE_TRAJECTORY_VALUES, so stored as an object.
  const large = await runsRoute.POST(
    jsonRequest(`/api/derivations/${sourceId}/runs`, "POST", { label: "long record", initialCoordinates: { theta: 2.5 }, endTime: 15, outputStep: 0.001 }),
    params({ id: sourceId }),
  );
  expect(large.status).toBe(201);
  expect((await listObjectKeys({ prefix: `derivations/${sourceId}/runs/` })).length).toBe(1);
  // Approved by the lead: the copy must start over as a draft.
  const asked = await requestReview({
    derivationId: sourceId,
    requesterId: kestrel.members.analyst.id,
    reviewerIds: [kestrel.members.reviewer.id],
    message: "",
  });
  if (!asked.ok) throw new Error(`review request refused: ${asked.reason}`);
  const approved = await approveRevision({ derivationId: sourceId, revisionId: asked.revision.id, approverId: kestrel.members.lead.id });
  if (!approved.ok) throw new Error(`approval refused: ${approved.reason}`);
});

beforeEach(() => signOut());

afterAll(async () => {
  signOut();
  await closeSimulationPool();
  await closeDatabase();
});

describe("notebook archive export", () => {
  it("downloads one zip holding the document, the runs and the files", async () => {
    signInAs(kestrel.members.viewer);
    const response = await exportArchive(sourceId);
    expect(response.status).toBe(200);
    expect(response.headers.get("content-type")).toBe("application/zip");
    expect(response.headers.get("content-disposition")).toBe('attachment; filename="gimbal-pitch-arm-archived.notebook.zip"');
    archive = new Uint8Array(await response.arrayBuffer());
    expect(Number(response.headers.get("content-length"))).toBe(archive.byteLength);

    const entries = unzipSync(archive);
    expect(Object.keys(entries).sort()).toEqual([
      "document.json",
      "files/001-g2-run14.csv",
      "files/002-stand-photo.png",
      "manifest.json",
      "runs/001.json",
      "runs/002.json",
    ]);
    const manifest = JSON.parse(strFromU8(entries["manifest.json"]!));
    expect(manifest).toMatchObject({
      format: "holonomy.notebook-archive",
      version: 1,
      derivation: { title: "Gimbal pitch arm, archived", status: "approved" },
    });
    for (const entry of [manifest.document, ...manifest.runs, ...manifest.files]) {
      expect(createHash("sha256").update(entries[entry.path]!).digest("hex")).toBe(entry.sha256);
    }
    expect(JSON.parse(strFromU8(entries["document.json"]!))).toEqual(sourceDocument);
    expect(entries["files/002-stand-photo.png"]).toEqual(pngBytes);
  });

  it("is a 404 for another team and for a derivation in the trash", async () => {
    signInAs(otherTeam.members.lead);
    expect((await exportArchive(sourceId)).status).toBe(404);
    const binned = await createDerivation({
      teamId: kestrel.team.id,
      title: "Binned sketch",
      ownerId: kestrel.members.analyst.id,
      content: blankDocument("Binned sketch"),
    });
    signInAs(kestrel.members.analyst);
    expect((await derivationRoute.DELETE(jsonRequest(`/api/derivations/${binned.id}`, "DELETE"), params({ id: binned.id }))).status).toBe(204);
    expect((await exportArchive(binned.id)).status).toBe(404);
  });
});

describe("notebook archive import", () => {
  it("restores everything in a new derivation: same document, runs and files byte for byte", async () => {
    expect(archive).toBeDefined();
    signInAs(otherTeam.members.analyst);
    const response = await importArchive(otherTeam, archive);
    expect(response.status).toBe(201);
    const { derivation } = await response.json();
    expect(derivation).toMatchObject({
      teamId: otherTeam.team.id,
      title: "Gimbal pitch arm, archived",
      status: "draft",
      ownerId: otherTeam.members.analyst.id,
    });
    expect(derivation.id).not.toBe(sourceId);
    expect(derivation.content).toEqual(sourceDocument);

    signInAs(kestrel.members.analyst);
    const sourceRuns = await runsOf(sourceId);
    const sourceFiles = await filesOf(sourceId);
    signInAs(otherTeam.members.analyst);
    const copiedRuns = await runsOf(derivation.id);
    const copiedFiles = await filesOf(derivation.id);

    expect(copiedRuns).toHaveLength(2);
    expect(copiedRuns.map(comparableRun)).toEqual(sourceRuns.map(comparableRun));
    expect(copiedRuns.every((run) => run.derivationId === derivation.id && run.createdBy?.id === otherTeam.members.analyst.id)).toBe(true);
    // The long run's trajectory went to object storage under the new derivation.
    const long = copiedRuns.find((run) => run.pointCount === 15001)!;
    expect(long.pointCount * 4).toBeGreaterThan(INLINE_TRAJECTORY_VALUES);
    expect(await listObjectKeys({ prefix: `derivations/${derivation.id}/runs/` })).toEqual([`derivations/${derivation.id}/runs/${long.id}/trajectory.json`]);

    expect(copiedFiles).toHaveLength(2);
    const byName = (list: typeof copiedFiles) => [...list].sort((a, b) => a.originalName.localeCompare(b.originalName));
    for (const [copy, original] of byName(copiedFiles).map((file, i) => [file, byName(sourceFiles)[i]!] as const)) {
      expect(Buffer.from(copy.bytes).equals(Buffer.from(original.bytes))).toBe(true);
      expect(copy).toMatchObject({
        kind: original.kind,
        originalName: original.originalName,
        contentType: original.contentType,
        sizeBytes: original.sizeBytes,
        summary: original.summary,
        createdAt: original.createdAt,
      });
    }
    expect(new TextDecoder().decode(byName(copiedFiles)[0]!.bytes)).toBe(measuredCsv);

    const audit = await getAuditEventsByTeamId({ teamId: otherTeam.team.id });
    expect(audit.find((event) => event.action === "derivation.create" && event.targetId === derivation.id)?.details).toEqual({
      source: "notebook-archive",
      files: 2,
      runs: 2,
    });
  });

  it("takes a new title when one is given", async () => {
    signInAs(otherTeam.members.lead);
    const response = await importArchive(otherTeam, archive, { title: "Gimbal pitch arm, partner copy" });
    expect(response.status).toBe(201);
    const { derivation } = await response.json();
    expect(derivation.title).toBe("Gimbal pitch arm, partner copy");
    expect(derivation.content.title).toBe("Gimbal pitch arm, partner copy");
    expect(derivation.content.cells).toEqual(sourceDocument.cells);
  });

  it("answers a repeat with the same Idempotency-Key with the first import", async () => {
    signInAs(otherTeam.members.analyst);
    const before = await teamDerivationCount(otherTeam.team.id);
    const first = await (await importArchive(otherTeam, archive, { key: "archive-double-click" })).json();
    const again = await importArchive(otherTeam, archive, { key: "archive-double-click" });
    expect(again.status).toBe(201);
    expect((await again.json()).derivation.id).toBe(first.derivation.id);
    expect(await teamDerivationCount(otherTeam.team.id)).toBe(before + 1);
  });

  it("is refused to reviewers and viewers", async () => {
    for (const role of ["reviewer", "viewer"] as const) {
      signInAs(otherTeam.members[role]);
      expect((await importArchive(otherTeam, archive)).status).toBe(403);
    }
  });
});

describe("a notebook archive with problems", () => {
  /** The exported archive with entries replaced (or removed with null), the manifest kept as exported unless `manifest` edits it. */
  function tamper(changes: Record<string, Uint8Array | null>, manifest?: (m: Record<string, unknown>) => void): Uint8Array {
    const entries = unzipSync(archive);
    const parsed = JSON.parse(strFromU8(entries["manifest.json"]!));
    for (const [path, bytes] of Object.entries(changes)) {
      if (bytes === null) delete entries[path];
      else entries[path] = new Uint8Array(bytes);
    }
    manifest?.(parsed);
    entries["manifest.json"] = strToU8(JSON.stringify(parsed));
    return zipSync(entries);
  }

  /** Updates an entry's size and SHA-256 in the manifest, so the content checks are what finds the problem. */
  function relist(manifest: Record<string, unknown>, path: string, bytes: Uint8Array) {
    const all = [manifest.document, ...(manifest.runs as unknown[]), ...(manifest.files as unknown[])] as { path: string; sizeBytes: number; sha256: string }[];
    const entry = all.find((e) => e.path === path)!;
    entry.sizeBytes = bytes.byteLength;
    entry.sha256 = createHash("sha256").update(bytes).digest("hex");
  }

  async function refused(bytes: Uint8Array, status = 422) {
    signInAs(otherTeam.members.lead);
    const before = await teamDerivationCount(otherTeam.team.id);
    const objectsBefore = (await listObjectKeys({ prefix: "derivations/" })).length;
    const response = await importArchive(otherTeam, bytes);
    expect(response.status).toBe(status);
    expect(await teamDerivationCount(otherTeam.team.id)).toBe(before);
    expect((await listObjectKeys({ prefix: "derivations/" })).length).toBe(objectsBefore);
    return (await response.json()).error;
  }

  it("refuses a file that is not a zip", async () => {
    const error = await refused(strToU8(JSON.stringify(pendulum)));
    expect(error.code).toBe("unprocessable:archive");
    expect(error.details.problems).toEqual([{ path: "archive", message: expect.stringContaining("not a zip file") }]);
  });

  it("reports every problem at once and creates nothing", async () => {
    const entries = unzipSync(archive);
    const document = JSON.parse(strFromU8(entries["document.json"]!));
    document.cells[1].kind = "sketch";
    const badDocument = strToU8(JSON.stringify(document));
    const run = JSON.parse(strFromU8(entries["runs/001.json"]!));
    run.trajectory.rates[0] = run.trajectory.rates[0].slice(1);
    const badRun = strToU8(JSON.stringify(run));
    const svg = strToU8('<svg xmlns="http://www.w3.org/2000/svg"><script>alert(1)</script></svg>');
    const bytes = tamper({ "document.json": badDocument, "runs/001.json": badRun, "files/002-stand-photo.png": svg, "runs/002.json": null }, (manifest) => {
      relist(manifest, "document.json", badDocument);
      relist(manifest, "runs/001.json", badRun);
      relist(manifest, "files/002-stand-photo.png", svg);
    });
    // The CSV is damaged without updating the manifest: its SHA-256 no longer matches.
    const damaged = unzipSync(bytes);
    damaged["files/001-g2-run14.csv"] = strToU8(measuredCsv.replace("19.96", "19.69"));
    const error = await refused(zipSync(damaged));
    expect(error.code).toBe("unprocessable:archive");
    const paths = (error.details.problems as { path: string }[]).map((problem) => problem.path);
    expect(paths).toEqual(
      expect.arrayContaining([
        expect.stringMatching(/^document\.json: cells\[1\]/),
        "runs/001.json: trajectory.rates[0]",
        "runs/002.json",
        "files/001-g2-run14.csv",
        "files/002-stand-photo.png",
      ]),
    );
    expect(error.message).toMatch(/has \d+ problems/);
    expect(error.fieldErrors["runs/002.json"]).toEqual(["missing from the archive"]);
  });

  it("refuses an archive from a newer version and one whose entries break the limits", async () => {
    const newer = await refused(tamper({}, (manifest) => (manifest.version = 2)));
    expect(newer.details.problems[0].message).toContain("newer version");
    const huge = await refused(
      tamper({}, (manifest) => {
        const [first] = manifest.files as { sizeBytes: number }[];
        first!.sizeBytes = env.UPLOAD_MAX_CSV_BYTES + 1;
      }),
    );
    expect(huge.fieldErrors["files/001-g2-run14.csv"][0]).toContain("the limit for a measured-data file");
  });

  it("refuses an upload over the size limit before reading it", async () => {
    signInAs(otherTeam.members.lead);
    const declared = env.NOTEBOOK_ARCHIVE_MAX_BYTES + 1024 * 1024;
    const request = new Request(`http://localhost/api/teams/${otherTeam.team.id}/derivations/import/notebook`, {
      method: "POST",
      headers: { "content-type": "application/zip", "content-length": String(declared) },
      body: archive as BodyInit,
    });
    const response = await notebookImportRoute.POST(request, params({ teamId: otherTeam.team.id }));
    expect(response.status).toBe(413);
    expect((await response.json()).error.code).toBe("too_large:archive");
  });

  it("removes the stored objects again when the rows cannot be written", async () => {
    signInAs(otherTeam.members.lead);
    const objectsBefore = (await listObjectKeys({ prefix: "derivations/" })).sort();
    const before = await teamDerivationCount(otherTeam.team.id);
    const [filesBefore] = await db.select({ total: count() }).from(files);
    const [runsBefore] = await db.select({ total: count() }).from(simulationRuns);
    failures.breakNextImport = true;
    const response = await importArchive(otherTeam, archive, { title: "Broken on the way in" });
    expect(failures.breakNextImport).toBe(false);
    expect(response.status).toBe(500);
    expect(await teamDerivationCount(otherTeam.team.id)).toBe(before);
    expect((await db.select({ total: count() }).from(files))[0]).toEqual(filesBefore);
    expect(
      await db
        .select({ id: derivations.id })
        .from(derivations)
        .where(and(eq(derivations.teamId, otherTeam.team.id), eq(derivations.title, "Broken on the way in"))),
    ).toEqual([]);
    expect((await listObjectKeys({ prefix: "derivations/" })).sort()).toEqual(objectsBefore);
    expect((await db.select({ total: count() }).from(simulationRuns))[0]).toEqual(runsBefore);
  });

  it("accepts a raw application/zip body too", async () => {
    signInAs(otherTeam.members.analyst);
    const request = new Request(`http://localhost/api/teams/${otherTeam.team.id}/derivations/import/notebook?title=${encodeURIComponent("Raw body copy")}`, {
      method: "POST",
      headers: { "content-type": "application/zip", "content-length": String(archive.byteLength) },
      body: archive as BodyInit,
    });
    const response = await notebookImportRoute.POST(request, params({ teamId: otherTeam.team.id }));
    expect(response.status).toBe(201);
    expect((await response.json()).derivation.title).toBe("Raw body copy");
  });
});
