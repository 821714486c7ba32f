// `npm run --silent bench:study`: how parameter studies scale over queue workers.
//
// Starts what it needs (PostgreSQL when its port is closed, stopped again at the end; a fresh database
// <DATABASE_URL's name>_study_bench, the worker bundles when they are missing
// or stale), then runs the demo crane's tolerance study (db/seed/demo.ts) with
// 1000 runs of 10 s each, first on 1 queue worker (scripts/worker.ts) and then
// on 2, and prints ONE JSON object on stdout:
//   { runs, failed, workers: { "1": { wallMs, runsPerSecond, meanRunMs }, "2": { … } }, speedup }
// wallMs runs from queueing the study to its completion. Progress goes to
// stderr. Workers and the bench database are removed at the end, also on failure.
//
// Options: --samples N (per case; default 500, two cases), --workers 1,2 (worker counts to measure).
import { execFile, spawn, type ChildProcess } from "node:child_process";
import { existsSync, readFileSync } from "node:fs";
import net from "node:net";
import path from "node:path";
import { promisify } from "node:util";
import { env } from "../lib/env";

const run = promisify(execFile);
const ROOT = path.resolve(import.meta.dirname, "..");
const log = (message: string) => process.stderr.write(`[bench:study] ${message}\n`);

function option(name: string, fallback: string): string {
  const index = process.argv.indexOf(`--${name}`);
  return index < 0 ? fallback : (process.argv[index + 1] ?? fallback);
}

const samples = Number(option("samples", "500"));
const workerCounts = option("workers", "1,2")
  .split(",")
  .map((n) => Number(n.trim()));
if (!Number.isInteger(samples) || samples < 1 || samples > 2500) throw new Error("--samples needs a whole number from 1 to 2500");
if (workerCounts.some((n) => !Number.isInteger(n) || n < 1 || n > 8)) throw new Error("--workers takes counts from 1 to 8, e.g. 1,2");

function portOpen(port: number): Promise<boolean> {
  return new Promise((resolve) => {
    const socket = net.connect({ host: "127.0.0.1", port });
    socket.once("connect", () => {
      socket.destroy();
      resolve(true);
    });
    socket.once("error", () => resolve(false));
  });
}

/** Starts a queue worker on the bench database; resolves once it takes jobs. */
function startWorker(childEnvironment: NodeJS.ProcessEnv): Promise<ChildProcess> {
  const worker = spawn(process.execPath, ["--conditions=react-server", "--import", "tsx", "scripts/worker.ts"], {
    cwd: ROOT,
    env: childEnvironment,
    stdio: ["ignore", "pipe", "inherit"],
  });
  return new Promise((resolve, reject) => {
    let output = "";
    worker.stdout!.on("data", (chunk: Buffer) => {
      output += chunk.toString();
      if (output.includes("ready")) resolve(worker);
    });
    worker.once("exit", (code) => reject(new Error(`a worker exited with code ${code} before it was ready: ${output}`)));
  });
}

function stopWorker(worker: ChildProcess): Promise<void> {
  return new Promise((resolve) => {
    if (worker.exitCode !== null || worker.signalCode !== null) return resolve();
    worker.once("exit", () => resolve());
    worker.kill("SIGTERM");
  });
}

/** Runs this script in driver mode; resolves with its stdout (its progress goes to our stderr). */
function driver(args: string[], childEnvironment: NodeJS.ProcessEnv): Promise<string> {
  const child = spawn(process.execPath, ["--conditions=react-server", "--import", "tsx", "scripts/bench-study.ts", ...args], {
    cwd: ROOT,
    env: childEnvironment,
    stdio: ["ignore", "pipe", "inherit"],
  });
  let stdout = "";
  child.stdout!.on("data", (chunk: Buffer) => (stdout += chunk.toString()));
  return new Promise((resolve, reject) => {
    child.once("exit", (code) => (code === 0 ? resolve(stdout) : reject(new Error(`the bench driver exited with code ${code}`))));
  });
}

/** The simulation worker bundle must carry the study task; rebuild when it is missing or older than it. */
async function ensureWorkerBundles(): Promise<void> {
  const bundle = path.join(ROOT, "dist", "workers", "simulation-worker.mjs");
  if (existsSync(bundle) && readFileSync(bundle, "utf8").includes("studyRun")) return;
  log("building the worker bundles");
  await run("bash", ["scripts/build-workers.sh"], { cwd: ROOT, maxBuffer: 16 << 20 });
}

async function main(): Promise<void> {
  const pgPort = Number(new URL(env.DATABASE_URL).port || 5432);
  let startedPostgres = false;
  if (!(await portOpen(pgPort))) {
    log("starting PostgreSQL");
    await run("bash", ["scripts/db.sh", "start"], { cwd: ROOT });
    startedPostgres = true;
  }
  try {
    await benchOn();
  } finally {
    // Stop what this bench started (PostgreSQL only when it was not running before).
    if (startedPostgres) await run("bash", ["scripts/db.sh", "stop"], { cwd: ROOT }).catch(() => undefined);
  }
}

async function benchOn(): Promise<void> {
  await ensureWorkerBundles();

  const benchUrl = new URL(env.DATABASE_URL);
  const database = `${benchUrl.pathname.slice(1)}_study_bench`;
  benchUrl.pathname = `/${database}`;
  const dropDatabase = () => run("psql", [env.DATABASE_URL, "-q", "-v", "ON_ERROR_STOP=1", "-c", `drop database if exists ${database} with (force)`]);
  log(`fresh database ${database}`);
  await dropDatabase();
  await run("psql", [env.DATABASE_URL, "-q", "-v", "ON_ERROR_STOP=1", "-c", `create database ${database}`]);
  const childEnvironment: NodeJS.ProcessEnv = { ...process.env, DATABASE_URL: benchUrl.toString(), AWS_SDK_JS_NODE_VERSION_SUPPORT_WARNING_DISABLED: "true" };
  await run("npx", ["--no-install", "tsx", "scripts/migrate.ts"], { cwd: ROOT, env: childEnvironment });

  const workers: ChildProcess[] = [];
  try {
    const figures: Record<string, { wallMs: number; runsPerSecond: number; meanRunMs: number | null }> = {};
    let runs = 0;
    let failed = 0;
    for (const count of workerCounts) {
      log(`starting ${count} worker${count === 1 ? "" : "s"}`);
      const started = await Promise.all(Array.from({ length: count }, () => startWorker(childEnvironment)));
      workers.push(...started);
      // The driver queues the study and follows it; it runs as a child so that its database is the bench's.
      const stdout = await driver(["--drive", String(count), "--samples", String(samples)], childEnvironment);
      const result = JSON.parse(stdout.trim().split("\n").at(-1)!) as { wallMs: number; total: number; failed: number; meanRunMs: number | null };
      figures[String(count)] = {
        wallMs: result.wallMs,
        runsPerSecond: Math.round((result.total / (result.wallMs / 1000)) * 100) / 100,
        // The integration's own wall time per run: it grows when the cores are shared, queue overhead does not show in it.
        meanRunMs: result.meanRunMs === null ? null : Math.round(result.meanRunMs * 10) / 10,
      };
      runs = result.total;
      failed = result.failed;
      log(`${count} worker${count === 1 ? "" : "s"}: ${result.total} runs in ${(result.wallMs / 1000).toFixed(1)} s (${result.failed} failed)`);
      await Promise.all(started.map(stopWorker));
    }
    const one = figures["1"];
    const two = figures["2"];
    const report = { runs, failed, workers: figures, ...(one && two ? { speedup: Math.round((one.wallMs / two.wallMs) * 100) / 100 } : {}) };
    process.stdout.write(JSON.stringify(report) + "\n");
  } finally {
    await Promise.all(workers.map(stopWorker));
    await dropDatabase().catch((error: unknown) => log(`could not drop ${database}: ${error instanceof Error ? error.message : String(error)}`));
  }
}

/** Child mode: on the bench database (this process's DATABASE_URL), queue the crane study for `count` workers and wait for it. */
async function drive(count: number): Promise<void> {
  const { closeDatabase } = await import("../db/client");
  const { createDerivation, getDerivationById } = await import("../db/queries/derivations");
  const { getMeanRunWallTimeByStudyId, getStudyById } = await import("../db/queries/studies");
  const { createTeamWithLead } = await import("../db/queries/teams");
  const { createUser } = await import("../db/queries/users");
  const { craneStudyCellId, craneStudySettings, craneStudyTitle, demoDerivations } = await import("../db/seed/demo");
  const { validDocumentOrThrow } = await import("../lib/evaluation/document-content");
  const { closeJobQueue } = await import("../lib/jobs/boss");
  const { queueStudy } = await import("../lib/studies/service");
  try {
    const user = await createUser({ email: `bench-${count}@study.holonomy.test`, name: "Study bench", passwordHash: "-" });
    if (!user) throw new Error("could not create the bench user");
    const team = await createTeamWithLead({ name: `Study bench ${count}`, leadUserId: user.id });
    const demo = demoDerivations.find((d) => d.title === craneStudyTitle)!;
    const content = validDocumentOrThrow(demo.content, { field: "content", title: demo.title });
    const cells = content.cells.map((cell) =>
      cell.id === craneStudyCellId && cell.kind === "study" ? { ...cell, settings: craneStudySettings(samples) } : cell,
    );
    const created = await createDerivation({ teamId: team.id, title: demo.title, ownerId: user.id, content: { ...content, cells } });
    const derivation = (await getDerivationById({ id: created.id }))!;
    const t0 = performance.now();
    const study = await queueStudy({ derivation, userId: user.id, cellId: craneStudyCellId });
    let reported = -1;
    for (;;) {
      const row = await getStudyById({ id: study.id });
      if (!row) throw new Error("the study row is gone");
      const finished = row.done + row.failed;
      if (Math.floor(finished / 100) !== reported) {
        reported = Math.floor(finished / 100);
        log(`${count} worker${count === 1 ? "" : "s"}: ${finished}/${row.total}`);
      }
      if (row.state === "completed") {
        const wallMs = Math.round(performance.now() - t0);
        const meanRunMs = await getMeanRunWallTimeByStudyId({ studyId: study.id });
        process.stdout.write(JSON.stringify({ wallMs, total: row.total, failed: row.failed, meanRunMs }) + "\n");
        return;
      }
      if (row.state !== "queued" && row.state !== "running") throw new Error(`the study ended ${row.state}: ${JSON.stringify(row.error)}`);
      await new Promise((resolve) => setTimeout(resolve, 100));
    }
  } finally {
    await closeJobQueue().catch(() => undefined);
    await closeDatabase().catch(() => undefined);
  }
}

const driveIndex = process.argv.indexOf("--drive");
(driveIndex >= 0 ? drive(Number(process.argv[driveIndex + 1])) : main()).catch((error: unknown) => {
  log(`failed: ${error instanceof Error ? error.message : String(error)}`);
  process.exitCode = 1;
});
