// `npm run --silent bench:api`: load figures of the HTTP API on a production build.
//
// Starts what it needs (PostgreSQL when its port is closed, a fresh database
// <DATABASE_URL's name>_bench migrated and seeded with the demo team, the
// production build when there is none or --build is given, `next start` on
// loopback), drives it with autocannon and prints ONE JSON object on stdout:
//   { endpoints: { health, listDerivations, evaluateCached, evaluateUncached, approvedByToken:
//       { p50Ms, p90Ms, p99Ms, requestsPerSecond, requests, non2xx, errors } }, targets, settings }
// Progress goes to stderr. The app is stopped at the end, also on failure.
//
// Options: --duration S (per endpoint, default 10), --connections N (default 10),
//          --port P (default 3290), --build (rebuild even when a build exists).
import { execFile, spawn, type ChildProcess } from "node:child_process";
import { randomBytes } from "node:crypto";
import { existsSync } from "node:fs";
import net from "node:net";
import path from "node:path";
import { promisify } from "node:util";
import autocannon from "autocannon";
import { demoApiToken, demoPassword, demoUsers } from "../db/seed/demo";
import { DEVELOPMENT_NEXTAUTH_SECRET, env } from "../lib/env";

const run = promisify(execFile);
const ROOT = path.resolve(import.meta.dirname, "..");
const log = (message: string) => process.stderr.write(`[bench:api] ${message}\n`);

function option(name: string, fallback: number): number {
  const index = process.argv.indexOf(`--${name}`);
  if (index < 0) return fallback;
  const value = Number(process.argv[index + 1]);
  if (!Number.isFinite(value) || value <= 0) throw new Error(`--${name} needs a positive number`);
  return value;
}

const durationSeconds = option("duration", 10);
const connections = option("connections", 10);
const port = option("port", 3290);
const forceBuild = process.argv.includes("--build");
const base = `http://127.0.0.1:${port}`;
// The token's rate limit (600 requests in 10 minutes) bounds that endpoint's run; the bench database is fresh each time.
const TOKEN_REQUESTS = 500;
// The evaluate rate limit (300 per person a minute) bounds those endpoints' runs the same way.
const EVALUATE_REQUESTS = 290;

/** This run's session secret (sessions live only as long as the bench). */
const BENCH_SECRET = randomBytes(32).toString("base64");

/** The environment of the child processes: the bench database, production mode. */
function childEnv(databaseUrl: string): NodeJS.ProcessEnv {
  const next: Record<string, string | undefined> = {
    ...process.env,
    DATABASE_URL: databaseUrl,
    NEXTAUTH_URL: `http://localhost:${port}`,
    // A production server refuses the committed development secret: the bench's server gets its own.
    NEXTAUTH_SECRET: process.env.NEXTAUTH_SECRET && process.env.NEXTAUTH_SECRET !== DEVELOPMENT_NEXTAUTH_SECRET ? process.env.NEXTAUTH_SECRET : BENCH_SECRET,
    NEXT_TELEMETRY_DISABLED: "1",
  };
  next.AWS_SDK_JS_NODE_VERSION_SUPPORT_WARNING_DISABLED = "true";
  // next build and next start pick production themselves; a test or development NODE_ENV would override them.
  delete next.NODE_ENV;
  return next as NodeJS.ProcessEnv;
}

function portOpen(portNumber: number): Promise<boolean> {
  return new Promise((resolve) => {
    const socket = net.connect({ host: "127.0.0.1", port: portNumber });
    socket.once("connect", () => {
      socket.destroy();
      resolve(true);
    });
    socket.once("error", () => resolve(false));
  });
}

async function waitForHealth(app: ChildProcess): Promise<void> {
  const deadline = Date.now() + 120_000;
  while (Date.now() < deadline) {
    if (app.exitCode !== null) throw new Error(`next start exited with code ${app.exitCode}`);
    try {
      if ((await fetch(`${base}/api/health`)).ok) return;
    } catch {
      // not listening yet
    }
    await new Promise((resolve) => setTimeout(resolve, 500));
  }
  throw new Error("the app did not answer /api/health within 120 s");
}

/** Signs in as the demo lead through next-auth's credentials flow; returns the Cookie header. */
async function signIn(role: "lead" | "analyst" = "lead"): Promise<string> {
  const csrf = await fetch(`${base}/api/auth/csrf`);
  const jar = new Map<string, string>();
  const keep = (response: Response) => {
    for (const line of response.headers.getSetCookie()) {
      const [pair] = line.split(";");
      const [name, ...value] = pair!.split("=");
      jar.set(name!.trim(), value.join("="));
    }
  };
  keep(csrf);
  const { csrfToken } = (await csrf.json()) as { csrfToken: string };
  const person = demoUsers.find((user) => user.role === role)!;
  const response = await fetch(`${base}/api/auth/callback/credentials`, {
    method: "POST",
    redirect: "manual",
    headers: { "content-type": "application/x-www-form-urlencoded", cookie: [...jar].map(([k, v]) => `${k}=${v}`).join("; ") },
    body: new URLSearchParams({ csrfToken, email: person.email, password: demoPassword, json: "true" }),
  });
  keep(response);
  const cookie = [...jar].map(([k, v]) => `${k}=${v}`).join("; ");
  if (![...jar.keys()].some((name) => name.includes("session-token"))) throw new Error(`sign-in failed (${response.status})`);
  return cookie;
}

async function json<T>(url: string, init: RequestInit = {}): Promise<T> {
  const response = await fetch(`${base}${url}`, init);
  if (!response.ok) throw new Error(`${init.method ?? "GET"} ${url}: ${response.status} ${await response.text()}`);
  return (await response.json()) as T;
}

interface Figures {
  p50Ms: number;
  p90Ms: number;
  p99Ms: number;
  requestsPerSecond: number;
  requests: number;
  non2xx: number;
  errors: number;
}

async function drive(name: string, options: autocannon.Options): Promise<Figures> {
  log(`driving ${name}`);
  const result = await autocannon({ connections, duration: durationSeconds, ...options, url: `${base}${options.url}` });
  return {
    p50Ms: result.latency.p50,
    p90Ms: result.latency.p90,
    p99Ms: result.latency.p99,
    requestsPerSecond: Math.round(result.requests.average * 10) / 10,
    requests: result.requests.total,
    non2xx: result.non2xx,
    errors: result.errors + result.timeouts,
  };
}

type Document = { cells: { kind: string; rows?: { name: string; value?: string }[] }[] } & Record<string, unknown>;

/** The document with its first parameter's value changed: another model hash, so the cache cannot answer. */
function variant(document: Document, index: number): Document {
  let changed = false;
  const cells = document.cells.map((cell) => {
    if (changed || cell.kind !== "parameters" || !cell.rows?.length) return cell;
    changed = true;
    const [first, ...rest] = cell.rows;
    return { ...cell, rows: [{ ...first!, value: String(1 + index / 1000) }, ...rest] };
  });
  return { ...document, cells };
}

async function main(): Promise<void> {
  const started = Date.now();
  let startedPostgres = false;
  if (!(await portOpen(new URL(env.DATABASE_URL).port ? Number(new URL(env.DATABASE_URL).port) : 5432))) {
    log("starting PostgreSQL");
    await run("bash", ["scripts/db.sh", "start"], { cwd: ROOT });
    startedPostgres = true;
  }
  try {
    await benchOn(started);
  } finally {
    // Stop what this bench started (PostgreSQL only when it was not running before).
    if (startedPostgres) await run("bash", ["scripts/db.sh", "stop"], { cwd: ROOT }).catch(() => undefined);
  }
}

async function benchOn(started: number): Promise<void> {
  if (await portOpen(port)) throw new Error(`port ${port} is in use; choose another with --port`);

  const benchUrl = new URL(env.DATABASE_URL);
  const database = `${benchUrl.pathname.slice(1)}_bench`;
  benchUrl.pathname = `/${database}`;
  log(`fresh database ${database}`);
  await run("psql", [
    env.DATABASE_URL,
    "-q",
    "-v",
    "ON_ERROR_STOP=1",
    "-c",
    `drop database if exists ${database} with (force)`,
    "-c",
    `create database ${database}`,
  ]);
  const childEnvironment = childEnv(benchUrl.toString());
  await run("npx", ["--no-install", "tsx", "scripts/migrate.ts"], { cwd: ROOT, env: childEnvironment });
  await run("npx", ["--no-install", "tsx", "--conditions=react-server", "scripts/seed.ts"], { cwd: ROOT, env: childEnvironment, maxBuffer: 16 << 20 });

  if (forceBuild || !existsSync(path.join(ROOT, ".next", "BUILD_ID"))) {
    log("building the app (next build)");
    await run("npm", ["run", "--silent", "build"], { cwd: ROOT, env: childEnvironment, maxBuffer: 64 << 20 });
  }

  log(`starting the app on ${base}`);
  const app = spawn("npx", ["--no-install", "next", "start", "-H", "127.0.0.1", "-p", String(port)], {
    cwd: ROOT,
    env: childEnvironment,
    stdio: ["ignore", "ignore", "inherit"],
    detached: true,
  });
  const stop = () => {
    if (app.pid && app.exitCode === null) {
      try {
        process.kill(-app.pid, "SIGTERM");
      } catch {
        // already gone
      }
    }
  };
  process.on("exit", stop);
  try {
    await waitForHealth(app);
    const cookie = await signIn();
    const session = { cookie };
    const { teams } = await json<{ teams: { id: string }[] }>("/api/teams", { headers: session });
    const teamId = teams[0]!.id;
    const { derivations } = await json<{ derivations: { id: string; status: string; title: string }[] }>(`/api/teams/${teamId}/derivations`, {
      headers: session,
    });
    const evaluated = derivations.find((d) => d.status !== "approved") ?? derivations[0]!;
    const approved = derivations.find((d) => d.status === "approved");
    if (!approved) throw new Error("the demo seed has no approved derivation");
    const { derivation } = await json<{ derivation: { content: Document } }>(`/api/derivations/${evaluated.id}`, { headers: session });
    const evaluateUrl = `/api/derivations/${evaluated.id}/evaluate`;
    const post = { ...session, "content-type": "application/json" };
    // Warm the cache and the route; check the second answer comes from it.
    await json(evaluateUrl, { method: "POST", headers: post, body: "{}" });
    const warm = await json<{ cached: boolean }>(evaluateUrl, { method: "POST", headers: post, body: "{}" });
    if (!warm.cached) throw new Error("a repeated evaluation was not answered from the cache");
    const probe = await json<{ cached: boolean }>(evaluateUrl, {
      method: "POST",
      headers: post,
      body: JSON.stringify({ document: variant(derivation.content, 999_999) }),
    });
    if (probe.cached) throw new Error("a changed document was answered from the cache");

    const endpoints: Record<string, Figures> = {};
    endpoints.health = await drive("GET /api/health", { url: "/api/health" });
    endpoints.listDerivations = await drive("GET /api/teams/[teamId]/derivations", { url: `/api/teams/${teamId}/derivations`, headers: session });
    // Evaluation is rate-limited per person (300 a minute): a fixed number of requests under it,
    // the cached ones as the lead (who spent three on the warm-up), the uncached as the analyst.
    endpoints.evaluateCached = await drive("POST …/evaluate (cached)", {
      url: evaluateUrl,
      method: "POST",
      headers: post,
      body: "{}",
      amount: EVALUATE_REQUESTS,
    });
    const analystPost = { cookie: await signIn("analyst"), "content-type": "application/json" };
    let variantIndex = 0;
    endpoints.evaluateUncached = await drive("POST …/evaluate (uncached)", {
      url: evaluateUrl,
      method: "POST",
      headers: analystPost,
      amount: EVALUATE_REQUESTS,
      // The engine pool has two threads: more connections only queue.
      connections: Math.min(connections, 4),
      requests: [{ setupRequest: (request) => ({ ...request, body: JSON.stringify({ document: variant(derivation.content, variantIndex++) }) }) }],
    });
    endpoints.approvedByToken = await drive("GET /api/v1/derivations/[id]/approved (token)", {
      url: `/api/v1/derivations/${approved.id}/approved`,
      headers: { authorization: `Bearer ${demoApiToken}` },
      // A fixed number of requests (autocannon then ignores the duration).
      amount: TOKEN_REQUESTS,
    });

    const figures = Object.values(endpoints);
    const targets = {
      errorsZero: figures.every((f) => f.errors === 0),
      non2xxZero: figures.every((f) => f.non2xx === 0),
      cachedEvaluateP99WithinFiveTimesHealth: endpoints.evaluateCached!.p99Ms <= 5 * endpoints.health!.p99Ms,
    };
    const report = {
      endpoints,
      targets,
      settings: { durationSeconds, connections, tokenRequests: TOKEN_REQUESTS, node: process.version, totalSeconds: Math.round((Date.now() - started) / 1000) },
    };
    process.stdout.write(JSON.stringify(report) + "\n");
  } finally {
    stop();
  }
}

main().then(
  () => process.exit(0),
  (error: unknown) => {
    log(`failed: ${error instanceof Error ? error.message : String(error)}`);
    process.exit(1);
  },
);
