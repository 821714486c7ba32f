import { spawn, type ChildProcess } from "node:child_process";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";

vi.mock("@/lib/auth/session", async () => (await import("./support/session")).sessionModule);

import * as derivationFilesRoute from "@/app/api/derivations/[id]/files/route";
import * as fitApplyRoute from "@/app/api/derivations/[id]/fit/apply/route";
import * as fitRoute from "@/app/api/derivations/[id]/fit/route";
import * as runCsvRoute from "@/app/api/derivations/[id]/runs/[runId]/csv/route";
import * as runRoute from "@/app/api/derivations/[id]/runs/[runId]/route";
import * as runsRoute from "@/app/api/derivations/[id]/runs/route";
import * as fileRoute from "@/app/api/files/[fileId]/route";
import { closeDatabase } from "@/db/client";
import { closeJobQueue } from "@/lib/jobs/boss";
import { getAuditEventsByTeamId } from "@/db/queries/audit";
import { createDerivation, getDerivationById } from "@/db/queries/derivations";
import type { Model } from "@/lib/mechanics";
import { documentFromContent } from "@/lib/evaluation/document-content";
import { documentToModel, modelToDocument } from "@/lib/notebook/document";
import { energyDrift, estimatePeriod } from "@/lib/simulate";
import { closeSimulationPool } from "@/lib/workers/simulation-pool";
import { listObjectKeys, objectExists } from "@/lib/storage";
import { formRequest, jsonRequest, makeTeam, params, resetDatabase, type TeamFixture } from "./support/fixtures";
import { signInAs, signOut } from "./support/session";

let kestrel: TeamFixture;
let otherTeam: TeamFixture;

// Gimbal pitch axis on a test stand, as a simple pendulum (point mass on a light arm).
const pendulum: Model = {
  title: "Gimbal pitch arm, large swing",
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

// Seat-rig carriage on a spring and damper; the model's k and c are first guesses the fit corrects.
const seatRig: Model = {
  title: "Seat rig carriage, vertical",
  coordinates: [{ name: "z", unit: "m" }],
  parameters: [
    { name: "m", unit: "kg", value: 1 },
    { name: "k", unit: "N/m", value: 35 },
    { name: "c", unit: "N*s/m", value: 0.3 },
  ],
  kinetic: "1/2*m*z'^2",
  potential: "1/2*k*z^2",
  dissipation: "1/2*c*z'^2",
};

// A hoist cable guide whose effective inertia m·cos²(s) vanishes at s = π/2: the mass matrix turns singular.
const collapsingGuide: Model = {
  title: "Cable guide with vanishing inertia",
  coordinates: [{ name: "s", unit: "rad" }],
  parameters: [{ name: "m", unit: "kg", value: 3 }],
  kinetic: "1/2*m*cos(s)^2*s'^2",
  potential: "0",
};

// The same gimbal arm written in the pivot's Cartesian frame, held on its circle by a constraint; the
// rope tension is an output from the rod's multiplier.
const cartesianArm: Model = {
  title: "Gimbal pitch arm, Cartesian with rod constraint",
  coordinates: [
    { name: "x", unit: "m" },
    { name: "y", unit: "m" },
  ],
  parameters: pendulum.parameters,
  kinetic: "1/2*m*(x'^2 + y'^2)",
  potential: "m*g*y",
  constraints: [{ name: "rod", expr: "x^2 + y^2 - l^2" }],
  outputs: [{ name: "tension", expr: "-2*l*lambda_rod", unit: "N" }],
};

// Server runs and fits are queued (lib/jobs) and run by a queue worker process, as the start scripts run it.
let worker: ChildProcess | null = null;

async function startQueueWorker(): Promise<void> {
  worker = spawn(process.execPath, ["--conditions=react-server", "--import", "tsx", "scripts/worker.ts"], {
    cwd: path.resolve(import.meta.dirname, "../.."),
    env: { ...process.env, AWS_SDK_JS_NODE_VERSION_SUPPORT_WARNING_DISABLED: "true" },
    stdio: ["ignore", "pipe", "inherit"],
  });
  const started = worker;
  await new Promise<void>((resolve, reject) => {
    let output = "";
    started.stdout!.on("data", (chunk: Buffer) => {
      output += chunk.toString();
      if (output.includes("ready")) resolve();
    });
    started.once("exit", (code) => reject(new Error(`the queue worker exited with code ${code} before it was ready: ${output}`)));
  });
}

async function stopQueueWorker(): Promise<void> {
  const running = worker;
  if (running && running.exitCode === null) {
    await new Promise<void>((resolve) => {
      running.once("exit", () => resolve());
      running.kill("SIGTERM");
    });
  }
}

async function makeDerivation(fixture: TeamFixture, model: Model) {
  const derivation = await createDerivation({
    teamId: fixture.team.id,
    title: model.title,
    ownerId: fixture.members.analyst.id,
    content: modelToDocument(model),
  });
  return derivation.id;
}

function uploadRequest(derivationId: string, name: string, bytes: Uint8Array | string, type = "text/csv", kind?: string): Promise<Request> {
  const form = new FormData();
  form.set("file", new File([typeof bytes === "string" ? bytes : new Uint8Array(bytes)], name, { type }));
  if (kind) form.set("kind", kind);
  return formRequest(`/api/derivations/${derivationId}/files`, form);
}

async function upload(derivationId: string, name: string, bytes: Uint8Array | string, type?: string, kind?: string) {
  return derivationFilesRoute.POST(await uploadRequest(derivationId, name, bytes, type, kind), params({ id: derivationId }));
}

async function listFiles(derivationId: string) {
  const response = await derivationFilesRoute.GET(jsonRequest(`/api/derivations/${derivationId}/files`, "GET"), params({ id: derivationId }));
  expect(response.status).toBe(200);
  return (await response.json()).files as { id: string; kind: string; sizeBytes: number; summary: unknown; contentType: string }[];
}

function getFile(fileId: string) {
  return fileRoute.GET(jsonRequest(`/api/files/${fileId}`, "GET"), params({ fileId }));
}

function postRun(derivationId: string, body: unknown) {
  return runsRoute.POST(jsonRequest(`/api/derivations/${derivationId}/runs`, "POST", body), params({ id: derivationId }));
}

function postFit(derivationId: string, body: unknown) {
  return fitRoute.POST(jsonRequest(`/api/derivations/${derivationId}/fit`, "POST", body), params({ id: derivationId }));
}

/** Everything stored in object storage for one derivation's uploads. */
function storedUploads(derivationId: string) {
  return listObjectKeys({ prefix: `derivations/${derivationId}/files/` });
}

const goodCsv = ["# Gimbal rig G-2, run 14, pitch arm released from 20 deg", "t [ms], theta [deg]", "0, 20.00", "5, 19.96", "10, 19.84", "15, 19.64", ""].join(
  "\n",
);

// A 1×1 PNG.
const png = Uint8Array.from(Buffer.from("iVBORw0KGgoAAAANSUhEUgAAAAEAAAABCAYAAAAfFcSJAAAADUlEQVR42mNkYPhfDwAChwGA60e6kgAAAABJRU5ErkJggg==", "base64"));

beforeAll(async () => {
  // The pool runs the bundled worker; build it from the current sources.
  await resetDatabase();
  kestrel = await makeTeam("Kestrel rig bay");
  otherTeam = await makeTeam("Another firm");
}, 120_000);

afterAll(async () => {
  signOut();
  await closeSimulationPool();
  await closeJobQueue();
  await closeDatabase();
});

describe("measured data and image uploads", () => {
  it("stores a CSV in object storage, lists it and streams back the same bytes", async () => {
    const id = await makeDerivation(kestrel, pendulum);
    signInAs(kestrel.members.analyst);
    const response = await upload(id, "g2-run14.csv", goodCsv);
    expect(response.status).toBe(201);
    const { file } = await response.json();
    expect(file).toMatchObject({ kind: "measured_csv", originalName: "g2-run14.csv", contentType: "text/csv; charset=utf-8", sizeBytes: goodCsv.length });
    // Milliseconds are read as seconds and degrees are kept as columns of the coordinate theta [rad].
    expect(file.summary).toEqual({
      timeUnit: "ms",
      columns: [{ coordinate: "theta", unit: "deg", targetUnit: "rad" }],
      rowCount: 4,
      timeSpan: { start: 0, end: 0.015 },
    });

    const listed = await listFiles(id);
    expect(listed.map((f) => f.id)).toEqual([file.id]);

    signInAs(kestrel.members.viewer);
    const download = await getFile(file.id);
    expect(download.status).toBe(200);
    expect(download.headers.get("content-type")).toBe("text/csv; charset=utf-8");
    expect(download.headers.get("content-disposition")).toBe('attachment; filename="g2-run14.csv"');
    expect(Buffer.from(await download.arrayBuffer()).equals(Buffer.from(goodCsv))).toBe(true);
    expect(await storedUploads(id)).toEqual([`derivations/${id}/files/${file.id}`]);
  });

  const badFiles: { label: string; csv: string; line: number | null; code: string; text: RegExp }[] = [
    {
      label: "non-monotone time",
      csv: "t [s], theta [rad]\n0, 0.1\n0.1, 0.09\n0.1, 0.08\n",
      line: 4,
      code: "non_monotone_time",
      text: /line 4: time 0\.1 s is not after/,
    },
    {
      label: "a NaN reading",
      csv: "# rig log\nt [s], theta [rad]\n0, 0.1\nNaN, 0.09\n",
      line: 4,
      code: "bad_cell",
      text: /line 4: the time cell "NaN" is not a number/,
    },
    { label: "no coordinate column", csv: "t [s]\n0\n0.1\n", line: 1, code: "missing_column", text: /line 1: the header has no coordinate column/ },
    {
      label: "a column the model does not have",
      csv: "t [s], phi [rad]\n0, 0.1\n0.1, 0.09\n",
      line: 1,
      code: "unknown_column",
      text: /line 1: "phi" is not a coordinate/,
    },
    { label: "an unknown unit", csv: "\n\nt [s], theta [blorps]\n0, 0.1\n0.1, 0.09\n", line: 3, code: "unknown_unit", text: /line 3: unknown unit "blorps"/ },
  ];

  it.each(badFiles)("refuses a CSV with $label, naming the line, and stores nothing", async ({ csv, line, code, text }) => {
    const id = await makeDerivation(kestrel, pendulum);
    signInAs(kestrel.members.analyst);
    const response = await upload(id, "bad.csv", csv);
    expect(response.status).toBe(422);
    const { error } = await response.json();
    expect(error.code).toBe("unprocessable:file");
    expect(error.message).toMatch(text);
    expect(error.details).toMatchObject({ code, line });
    expect(await listFiles(id)).toEqual([]);
    expect(await storedUploads(id)).toEqual([]);
  });

  it("refuses a CSV over the 10 MB limit with 413 and stores nothing", async () => {
    const id = await makeDerivation(kestrel, pendulum);
    signInAs(kestrel.members.analyst);
    const rows = ["t [s], theta [rad]"];
    let size = rows[0]!.length + 1;
    for (let k = 0; size <= 10 * 1024 * 1024; k++) {
      const row = `${(k * 0.001).toFixed(3)}, ${Math.sin(k * 0.001).toFixed(9)}`;
      rows.push(row);
      size += row.length + 1;
    }
    const response = await upload(id, "too-long.csv", rows.join("\n"));
    expect(response.status).toBe(413);
    expect((await response.json()).error.code).toBe("too_large:file");
    expect(await listFiles(id)).toEqual([]);
    expect(await storedUploads(id)).toEqual([]);
  });

  it("refuses a body whose declared length is over the limit before reading it", async () => {
    const id = await makeDerivation(kestrel, pendulum);
    signInAs(kestrel.members.analyst);
    const request = new Request(`http://localhost/api/derivations/${id}/files`, {
      method: "POST",
      headers: { "content-type": "multipart/form-data; boundary=x", "content-length": String(50 * 1024 * 1024) },
      body: "--x--",
    });
    const response = await derivationFilesRoute.POST(request, params({ id }));
    expect(response.status).toBe(413);
  });

  it("refuses an upload without a Content-Length (411) and cuts off a body longer than it declared", async () => {
    const id = await makeDerivation(kestrel, pendulum);
    signInAs(kestrel.members.analyst);
    const form = new FormData();
    form.set("file", new File(["t,x\n0,0\n"], "run.csv", { type: "text/csv" }));
    const encoded = new Response(form);
    const contentType = encoded.headers.get("content-type") ?? "";
    const bytes = new Uint8Array(await encoded.arrayBuffer());
    const unsized = await derivationFilesRoute.POST(
      new Request(`http://localhost/api/derivations/${id}/files`, { method: "POST", headers: { "content-type": contentType }, body: bytes }),
      params({ id }),
    );
    expect(unsized.status).toBe(411);
    expect((await unsized.json()).error.code).toBe("length_required:api");

    // A streamed body far past the limit while claiming a small length: reading stops, nothing is stored.
    let sent = 0;
    const chunk = new Uint8Array(1024 * 1024).fill(48);
    const endless = new ReadableStream<Uint8Array>({
      pull(controller) {
        sent += chunk.byteLength;
        controller.enqueue(chunk);
      },
    });
    const lying = await derivationFilesRoute.POST(
      new Request(`http://localhost/api/derivations/${id}/files`, {
        method: "POST",
        headers: { "content-type": contentType, "content-length": String(bytes.byteLength) },
        body: endless,
        duplex: "half",
      } as RequestInit),
      params({ id }),
    );
    expect(lying.status).toBe(400);
    expect(sent).toBeLessThanOrEqual(2 * chunk.byteLength);
    expect(await listFiles(id)).toEqual([]);
  });

  it("stores a PNG, serves it inline with its type, and refuses SVG", async () => {
    const id = await makeDerivation(kestrel, pendulum);
    signInAs(kestrel.members.analyst);
    // The browser's claim is ignored: the type comes from the bytes.
    const response = await upload(id, "gimbal sketch.png", png, "application/octet-stream");
    expect(response.status).toBe(201);
    const { file } = await response.json();
    expect(file).toMatchObject({ kind: "image", contentType: "image/png", sizeBytes: png.byteLength, summary: null });

    const served = await getFile(file.id);
    expect(served.status).toBe(200);
    expect(served.headers.get("content-type")).toBe("image/png");
    expect(served.headers.get("x-content-type-options")).toBe("nosniff");
    expect(served.headers.get("content-disposition")).toBe('inline; filename="gimbal sketch.png"');
    expect(Buffer.from(await served.arrayBuffer()).equals(Buffer.from(png))).toBe(true);

    const svg = '<svg xmlns="http://www.w3.org/2000/svg"><script>alert(1)</script></svg>';
    const refused = await upload(id, "sketch.svg", svg, "image/svg+xml", "image");
    expect(refused.status).toBe(422);
    expect((await refused.json()).error.message).toMatch(/SVG/);
    expect((await listFiles(id)).map((f) => f.id)).toEqual([file.id]);
    expect(await storedUploads(id)).toEqual([`derivations/${id}/files/${file.id}`]);
  });

  it("deletes a file's row and its object", async () => {
    const id = await makeDerivation(kestrel, pendulum);
    signInAs(kestrel.members.analyst);
    const { file } = await (await upload(id, "g2.csv", goodCsv)).json();
    signInAs(kestrel.members.viewer);
    expect((await fileRoute.DELETE(jsonRequest(`/api/files/${file.id}`, "DELETE"), params({ fileId: file.id }))).status).toBe(403);
    signInAs(kestrel.members.analyst);
    expect((await fileRoute.DELETE(jsonRequest(`/api/files/${file.id}`, "DELETE"), params({ fileId: file.id }))).status).toBe(204);
    expect(await listFiles(id)).toEqual([]);
    expect(await storedUploads(id)).toEqual([]);
    expect((await getFile(file.id)).status).toBe(404);
  });

  it("checks the session, the role and the team", async () => {
    const id = await makeDerivation(kestrel, pendulum);
    signInAs(kestrel.members.analyst);
    const { file } = await (await upload(id, "g2.csv", goodCsv)).json();

    signOut();
    expect((await upload(id, "g2.csv", goodCsv)).status).toBe(401);
    expect((await getFile(file.id)).status).toBe(401);

    for (const role of ["viewer", "reviewer"] as const) {
      signInAs(kestrel.members[role]);
      const refused = await upload(id, "g2.csv", goodCsv);
      expect(refused.status).toBe(403);
      expect((await refused.json()).error.code).toBe("forbidden:derivation");
    }

    // Another team's members see neither the derivation nor its files.
    signInAs(otherTeam.members.lead);
    expect((await upload(id, "g2.csv", goodCsv)).status).toBe(404);
    expect((await derivationFilesRoute.GET(jsonRequest(`/api/derivations/${id}/files`, "GET"), params({ id }))).status).toBe(404);
    expect((await getFile(file.id)).status).toBe(404);
    expect((await fileRoute.DELETE(jsonRequest(`/api/files/${file.id}`, "DELETE"), params({ fileId: file.id }))).status).toBe(404);
    expect(await storedUploads(id)).toEqual([`derivations/${id}/files/${file.id}`]);
  });
});

describe("server simulation runs", () => {
  beforeAll(startQueueWorker, 120_000);
  afterAll(stopQueueWorker);

  it("runs a large-amplitude pendulum, stores it and lists it; period and energy check out", async () => {
    // Released from 150°, so the energy function (zero at the pivot's height) starts well away from 0.
    const id = await makeDerivation(kestrel, pendulum);
    signInAs(kestrel.members.analyst);
    const response = await postRun(id, {
      label: "release from 150 deg",
      initialCoordinates: { theta: (5 * Math.PI) / 6 },
      endTime: 10,
      outputStep: 0.001,
      relativeTolerance: 1e-10,
      absoluteTolerance: 1e-10,
    });
    expect(response.status).toBe(201);
    const { run } = await response.json();
    expect(run).toMatchObject({ status: "completed", failure: null, timeReached: 10, pointCount: 10001 });
    expect(run.trajectory.times).toHaveLength(10001);

    // Abramowitz & Stegun, Handbook of Mathematical Functions, 17.3 and Table 17.1:
    // T = 4√(l/g)·K(sin(θ0/2)); at θ0 = 150°, T/T0 = 2K/π = 1.762204 with T0 = 2π√(l/g).
    const t0 = 2 * Math.PI * Math.sqrt(1.5 / 9.81);
    const estimate = estimatePeriod(run.trajectory.times, run.trajectory.coordinates[0], run.trajectory.rates[0], 0);
    expect(estimate).not.toBeNull();
    expect(Math.abs(estimate!.period / t0 - 1.762204)).toBeLessThan(1e-5);

    // Energy function of a conservative system is constant (any analytical mechanics text; from memory).
    expect(run.summary.energyCheck.warning).toBe(false);
    expect(run.energyDrift).toBeLessThan(1e-8);
    expect(energyDrift(run.trajectory.energy).relativeDrift).toBeCloseTo(run.energyDrift, 12);

    // A reviewer may run a check; the run is visible to every member, the viewer included.
    signInAs(kestrel.members.viewer);
    const list = await runsRoute.GET(jsonRequest(`/api/derivations/${id}/runs`, "GET"), params({ id }));
    const { runs } = await list.json();
    expect(runs).toHaveLength(1);
    expect(runs[0]).toMatchObject({ id: run.id, status: "completed", pointCount: 10001, createdBy: { id: kestrel.members.analyst.id } });
    expect(runs[0].trajectory).toBeUndefined();
    expect(runs[0].settings).toMatchObject({ label: "release from 150 deg", initialCoordinates: { theta: (5 * Math.PI) / 6 } });

    const one = await (await runRoute.GET(jsonRequest(`/api/derivations/${id}/runs/${run.id}`, "GET"), params({ id, runId: run.id }))).json();
    expect(one.run.trajectory).toEqual(run.trajectory);

    const csv = await runCsvRoute.GET(jsonRequest(`/api/derivations/${id}/runs/${run.id}/csv`, "GET"), params({ id, runId: run.id }));
    expect(csv.headers.get("content-type")).toBe("text/csv; charset=utf-8");
    const lines = (await csv.text()).trimEnd().split("\n");
    expect(lines[0]).toBe("t [s],theta [rad],theta' [rad/s],energy [J]");
    expect(lines).toHaveLength(10002);
    const last = lines.at(-1)!.split(",").map(Number);
    expect(last[0]).toBe(10);
    expect(last[1]).toBe(run.trajectory.coordinates[0].at(-1));
    expect(csv.headers.get("content-disposition")).toMatch(/^attachment; filename="[a-z0-9-]+-run-\d{4}-\d{2}-\d{2}T\d{2}-\d{2}-\d{2}\.csv"$/);

    // The download is measured data as it stands: an analyst can attach it to the derivation again.
    signInAs(kestrel.members.analyst);
    const again = await upload(id, "run-export.csv", lines.join("\n"));
    expect(again.status).toBe(201);
    const { file } = await again.json();
    expect(file.summary).toMatchObject({
      timeUnit: "s",
      rowCount: 10001,
      columns: [{ coordinate: "theta", unit: "rad", targetUnit: "rad" }],
      timeSpan: { start: 0, end: 10 },
    });
  });

  it("stores a constrained run's outputs, multipliers and residuals and exports them as CSV columns with units", async () => {
    const id = await makeDerivation(kestrel, cartesianArm);
    signInAs(kestrel.members.analyst);
    // Released at 60° from the hanging position with a rate off the circle, so the start is projected.
    // The multiplier is a force per metre of the constraint, kg/s^2 (N/m) in base units.
    const theta0 = Math.PI / 3;
    const response = await postRun(id, {
      initialCoordinates: { x: 1.5 * Math.sin(theta0), y: -1.5 * Math.cos(theta0) },
      initialRates: { x: 0.1, y: 0.2 },
      endTime: 2,
      outputStep: 0.01,
      relativeTolerance: 1e-10,
      absoluteTolerance: 1e-10,
    });
    expect(response.status).toBe(201);
    const { run } = await response.json();
    expect(run).toMatchObject({ status: "completed", pointCount: 201 });
    expect(run.trajectory.outputs).toHaveLength(1);
    expect(run.trajectory.outputs[0]).toMatchObject({ name: "tension", unit: "N" });
    expect(run.trajectory.outputs[0].peak.value).toBe(Math.max(...run.trajectory.outputs[0].values.map(Math.abs)));
    expect(run.trajectory.constraints).toMatchObject({ names: ["rod"], multiplierNames: ["lambda_rod"] });
    expect(run.summary.constraints.initialProjection.rates.length).toBeGreaterThan(0);
    expect(run.summary.constraints.maxResidual[0]).toBeLessThan(1e-8);

    const csv = await runCsvRoute.GET(jsonRequest(`/api/derivations/${id}/runs/${run.id}/csv`, "GET"), params({ id, runId: run.id }));
    const lines = (await csv.text()).trimEnd().split("\n");
    expect(lines[0]).toBe("t [s],x [m],y [m],x' [m/s],y' [m/s],energy [J],tension [N],lambda_rod [kg/s^2],residual rod [m^2]");
    expect(lines).toHaveLength(202);
    const m = 2.5;
    const l = 1.5;
    const g = 9.81;
    for (const k of [0, 77, 200]) {
      const [t, , y, vx, vy, , tension, lambda, residual] = lines[k + 1]!.split(",").map(Number);
      expect(t).toBeCloseTo(k * 0.01, 12);
      // Rod tension of a pendulum, T = m g cos θ + m l θ'² with cos θ = −y/l and l θ' = speed (fact of the trade).
      const closed = m * g * (-y! / l) + (m * (vx! * vx! + vy! * vy!)) / l;
      expect(Math.abs(tension! - closed)).toBeLessThan(1e-6 * closed);
      // The rod's constraint force is λ ∇(x² + y² − l²) = 2λ(x, y), so λ = −T/(2l) on the circle (fact of the trade).
      expect(Math.abs(lambda! + closed / (2 * l))).toBeLessThan(1e-6 * closed);
      expect(Math.abs(residual!)).toBeLessThan(1e-8);
    }
  }, 120_000);

  it("keeps a large trajectory in object storage and serves it the same way", async () => {
    const id = await makeDerivation(kestrel, seatRig);
    signInAs(kestrel.members.reviewer);
    const response = await postRun(id, { initialCoordinates: { z: 0.01 }, endTime: 30, outputStep: 0.001 });
    expect(response.status).toBe(201);
    const { run } = await response.json();
    expect(run.pointCount).toBe(30001);
    const keys = await listObjectKeys({ prefix: `derivations/${id}/runs/` });
    expect(keys).toEqual([`derivations/${id}/runs/${run.id}/trajectory.json`]);
    expect(await objectExists({ key: keys[0]! })).toBe(true);
    const one = await (await runRoute.GET(jsonRequest(`/api/derivations/${id}/runs/${run.id}`, "GET"), params({ id, runId: run.id }))).json();
    expect(one.run.trajectory.times).toHaveLength(30001);
    // Damped oscillator closed form (Rao, Mechanical Vibrations; from memory): z(t) = e^(−ζω0 t)[z0 cos ωd t + ζω0 z0/ωd sin ωd t].
    const w0 = Math.sqrt(35 / 1);
    const zeta = 0.3 / (2 * Math.sqrt(35 * 1));
    const wd = w0 * Math.sqrt(1 - zeta * zeta);
    const closed = (t: number) => Math.exp(-zeta * w0 * t) * (0.01 * Math.cos(wd * t) + ((zeta * w0 * 0.01) / wd) * Math.sin(wd * t));
    for (const k of [0, 7777, 15000, 30000]) {
      expect(Math.abs(one.run.trajectory.coordinates[0][k] - closed(one.run.trajectory.times[k]))).toBeLessThan(1e-7);
    }
  });

  it("stores a run that fails on a singular mass matrix with its reason, time reached and partial trajectory", async () => {
    const id = await makeDerivation(kestrel, collapsingGuide);
    signInAs(kestrel.members.analyst);
    const response = await postRun(id, { initialCoordinates: { s: 0 }, initialRates: { s: 1 }, endTime: 2, outputStep: 0.01 });
    expect(response.status).toBe(201);
    const { run } = await response.json();
    expect(run.status).toBe("failed");
    // Our own derivation: h = 1/2·m·cos²s·s'² is conserved, so cos s · s' = 1 and sin s = t;
    // s reaches π/2, where M = m·cos²s vanishes, at t = 1.
    expect(["singular_mass_matrix", "step_size_underflow", "non_finite_state"]).toContain(run.failure.reason);
    expect(run.failure.timeReached).toBeGreaterThan(0.98);
    expect(run.failure.timeReached).toBeLessThanOrEqual(1);
    expect(run.timeReached).toBe(run.failure.timeReached);
    expect(run.pointCount).toBeGreaterThan(90);
    expect(run.trajectory.times.at(-1)).toBeLessThanOrEqual(run.timeReached);
    const k = 50;
    expect(Math.sin(run.trajectory.coordinates[0][k])).toBeCloseTo(run.trajectory.times[k], 6);

    const list = await (await runsRoute.GET(jsonRequest(`/api/derivations/${id}/runs`, "GET"), params({ id }))).json();
    expect(list.runs[0]).toMatchObject({ id: run.id, status: "failed", failure: { reason: run.failure.reason } });
  });

  it("stops a run at its time limit and keeps what it computed", async () => {
    const id = await makeDerivation(kestrel, pendulum);
    signInAs(kestrel.members.analyst);
    const response = await postRun(id, {
      initialCoordinates: { theta: 3 },
      endTime: 1e6,
      outputStep: 5,
      relativeTolerance: 1e-12,
      absoluteTolerance: 1e-14,
      timeLimitMs: 200,
    });
    expect(response.status).toBe(201);
    const { run } = await response.json();
    expect(run.status).toBe("failed");
    expect(run.failure.reason).toBe("time_limit");
    expect(run.timeReached).toBeGreaterThan(0);
    expect(run.timeReached).toBeLessThan(1e6);
    expect(run.trajectory.times.at(-1)).toBeLessThanOrEqual(run.timeReached);
  });

  it("answers bad settings with 400/422 naming the field and stores nothing", async () => {
    const id = await makeDerivation(kestrel, pendulum);
    signInAs(kestrel.members.analyst);
    const tooFine = await postRun(id, { initialCoordinates: { theta: 0.1 }, endTime: 1000, outputStep: 1e-5 });
    expect(tooFine.status).toBe(400);
    expect((await tooFine.json()).error.fieldErrors.outputStep).toBeDefined();

    const unknownInput = await postRun(id, { initialCoordinates: { theta: 0.1 }, endTime: 1, outputStep: 0.1, inputs: { torque: "sin(t)" } });
    expect(unknownInput.status).toBe(422);
    const body = await unknownInput.json();
    expect(body.error.code).toBe("unprocessable:simulation");
    expect(Object.keys(body.error.fieldErrors)[0]).toMatch(/torque/);

    const list = await (await runsRoute.GET(jsonRequest(`/api/derivations/${id}/runs`, "GET"), params({ id }))).json();
    expect(list.runs).toEqual([]);
  });

  it("lets no viewer run and hides other teams' runs", async () => {
    const id = await makeDerivation(kestrel, pendulum);
    signInAs(kestrel.members.viewer);
    const refused = await postRun(id, { initialCoordinates: { theta: 0.1 }, endTime: 1, outputStep: 0.1 });
    expect(refused.status).toBe(403);
    signInAs(kestrel.members.analyst);
    const { run } = await (await postRun(id, { initialCoordinates: { theta: 0.1 }, endTime: 1, outputStep: 0.1 })).json();
    signInAs(otherTeam.members.analyst);
    expect((await postRun(id, { initialCoordinates: { theta: 0.1 }, endTime: 1, outputStep: 0.1 })).status).toBe(404);
    expect((await runsRoute.GET(jsonRequest(`/api/derivations/${id}/runs`, "GET"), params({ id }))).status).toBe(404);
    expect((await runRoute.GET(jsonRequest(`/api/derivations/${id}/runs/${run.id}`, "GET"), params({ id, runId: run.id }))).status).toBe(404);
    expect((await runCsvRoute.GET(jsonRequest(`/api/derivations/${id}/runs/${run.id}/csv`, "GET"), params({ id, runId: run.id }))).status).toBe(404);
  });
});

describe("fitting to uploaded rig data", () => {
  beforeAll(startQueueWorker, 120_000);
  afterAll(stopQueueWorker);

  // Synthetic rig data: m = 1 kg, k = 40 N/m, c = 0.8 N·s/m, z0 = 0.1 m at rest,
  // written in millimetres with seeded Gaussian noise of 0.5 mm.
  const truth = { m: 1, k: 40, c: 0.8, z0: 0.1 };
  const noiseMm = 0.5;

  function syntheticCsv(): string {
    // Damped oscillator closed form (Rao, Mechanical Vibrations; from memory).
    const w0 = Math.sqrt(truth.k / truth.m);
    const zeta = truth.c / (2 * Math.sqrt(truth.k * truth.m));
    const wd = w0 * Math.sqrt(1 - zeta * zeta);
    let seed = 20_417;
    const uniform = () => {
      seed = (seed * 1_103_515_245 + 12_345) % 2_147_483_648;
      return (seed + 1) / 2_147_483_649;
    };
    const gaussian = () => Math.sqrt(-2 * Math.log(uniform())) * Math.cos(2 * Math.PI * uniform());
    const lines = ["# Seat rig S-1, carriage released from 100 mm", "t [s], z [mm]"];
    for (let i = 0; i <= 400; i++) {
      const t = i * 0.01;
      const z = Math.exp(-zeta * w0 * t) * (truth.z0 * Math.cos(wd * t) + ((zeta * w0 * truth.z0) / wd) * Math.sin(wd * t));
      const reading = i === 0 ? z * 1000 : z * 1000 + noiseMm * gaussian();
      lines.push(`${t.toFixed(2)}, ${reading.toFixed(4)}`);
    }
    return `${lines.join("\n")}\n`;
  }

  it("recovers stiffness and damping from an uploaded CSV, then writes them to the Parameters cell", async () => {
    const id = await makeDerivation(kestrel, seatRig);
    signInAs(kestrel.members.analyst);
    const uploaded = await upload(id, "s1-release.csv", syntheticCsv());
    expect(uploaded.status).toBe(201);
    const { file } = await uploaded.json();

    const response = await postFit(id, {
      fileId: file.id,
      parameters: [
        { name: "k", initial: 35, min: 1 },
        { name: "c", initial: 0.3, min: 0 },
      ],
      settings: { initialCoordinates: { z: truth.z0 }, relativeTolerance: 1e-9, absoluteTolerance: 1e-11 },
    });
    expect(response.status).toBe(200);
    const { fit, overlay, applied } = await response.json();
    expect(applied).toBeNull();
    expect(fit.status).toBe("converged");
    // The result explains itself: how it ended, and the residual in the coordinate's unit.
    expect(fit.report.outcome).toMatch(/^Converged after \d+ iterations/);
    expect(fit.report.residuals).toEqual([expect.objectContaining({ coordinate: "z", unit: "m" })]);
    expect(fit.report.residuals[0].text).toMatch(/^z: .* m RMS$/);
    expect(fit.notIdentifiable).toEqual([]);
    const k = fit.parameters.find((p: { name: string }) => p.name === "k");
    const c = fit.parameters.find((p: { name: string }) => p.name === "c");
    // Stated tolerance: within 1 % of the true stiffness and 5 % of the true damping, and within
    // four standard errors (least-squares standard errors under independent Gaussian noise).
    expect(Math.abs(k.value - truth.k)).toBeLessThan(0.01 * truth.k);
    expect(Math.abs(c.value - truth.c)).toBeLessThan(0.05 * truth.c);
    expect(Math.abs(k.value - truth.k)).toBeLessThan(4 * k.standardError);
    expect(Math.abs(c.value - truth.c)).toBeLessThan(4 * c.standardError);
    expect(k.unit).toBe("N/m");
    // Residuals are in metres: about the noise level once the model fits.
    expect(fit.residualRms).toBeGreaterThan(0.7 * noiseMm * 1e-3);
    expect(fit.residualRms).toBeLessThan(1.3 * noiseMm * 1e-3);

    expect(overlay.fileId).toBe(file.id);
    expect(overlay.times).toHaveLength(401);
    expect(overlay.series[0]).toMatchObject({ coordinate: "z", unit: "m" });
    expect(overlay.series[0].measured[0]).toBeCloseTo(0.1, 9);
    expect(overlay.series[0].fitted).toHaveLength(401);

    // Only analysts and leads write fitted values back.
    for (const role of ["viewer", "reviewer"] as const) {
      signInAs(kestrel.members[role]);
      const refused = await fitApplyRoute.POST(jsonRequest(`/api/derivations/${id}/fit/apply`, "POST", { values: { k: k.value } }), params({ id }));
      expect(refused.status).toBe(403);
    }
    signInAs(kestrel.members.reviewer);
    expect((await postFit(id, { fileId: file.id, parameters: [{ name: "c" }], apply: true })).status).toBe(403);

    signInAs(kestrel.members.analyst);
    const apply = await fitApplyRoute.POST(
      jsonRequest(`/api/derivations/${id}/fit/apply`, "POST", { values: { k: k.value, c: c.value }, fileId: file.id }),
      params({ id }),
    );
    expect(apply.status).toBe(200);
    const stored = await getDerivationById({ id });
    const model = documentToModel(documentFromContent(stored!.content, stored!.title));
    const value = (name: string) => model.parameters.find((p) => p.name === name)!.value!;
    expect(value("k")).toBeCloseTo(k.value, 5);
    expect(value("c")).toBeCloseTo(c.value, 6);
    expect(value("m")).toBe(1);
    const audit = await getAuditEventsByTeamId({ teamId: kestrel.team.id });
    expect(audit.find((e) => e.action === "derivation.fit_apply" && e.targetId === id)?.details).toMatchObject({ fileId: file.id, values: { k: k.value } });

    const unknown = await fitApplyRoute.POST(jsonRequest(`/api/derivations/${id}/fit/apply`, "POST", { values: { zeta: 0.1 } }), params({ id }));
    expect(unknown.status).toBe(422);
  }, 90_000);

  it("refuses to fit a parameter the model does not have, an image, or another team's file", async () => {
    const id = await makeDerivation(kestrel, seatRig);
    signInAs(kestrel.members.analyst);
    const { file } = await (await upload(id, "s1.csv", syntheticCsv())).json();
    const { file: image } = await (await upload(id, "rig.png", png)).json();

    const unknown = await postFit(id, { fileId: file.id, parameters: [{ name: "zeta" }] });
    expect(unknown.status).toBe(422);
    expect((await unknown.json()).error.message).toMatch(/zeta/);
    expect((await postFit(id, { fileId: image.id, parameters: [{ name: "c" }] })).status).toBe(422);

    const elsewhere = await makeDerivation(otherTeam, seatRig);
    signInAs(otherTeam.members.analyst);
    expect((await postFit(elsewhere, { fileId: file.id, parameters: [{ name: "c" }] })).status).toBe(404);
    expect((await postFit(id, { fileId: file.id, parameters: [{ name: "c" }] })).status).toBe(404);
  });
});
