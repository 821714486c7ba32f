import { execFile } from "node:child_process";
import { mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { promisify } from "node:util";
import { DeleteBucketCommand, DeleteObjectCommand, ListObjectsV2Command, S3Client } from "@aws-sdk/client-s3";
import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";

// Buckets of the test's own: the test bucket is shared with other suites, whose objects would
// make the backup slow and its content a moving target. Set before lib/env reads the environment.
const buckets = vi.hoisted(() => {
  const suffix = Math.random().toString(36).slice(2, 10);
  const names = { source: `holonomy-backup-${suffix}`, restored: `holonomy-restored-${suffix}` };
  process.env.S3_BUCKET = names.source;
  return names;
});

vi.mock("@/lib/auth/session", async () => (await import("./support/session")).sessionModule);

import * as derivationFilesRoute from "@/app/api/derivations/[id]/files/route";
import { closeDatabase } from "@/db/client";
import { createDerivation, updateDerivationById } from "@/db/queries/derivations";
import { getTableDigests, type TableDigest } from "@/db/queries/table-digests";
import { readObjectsManifest } from "@/lib/backup/objects";
import { env } from "@/lib/env";
import { ensureBucket } from "@/lib/storage";
import { modelToDocument } from "@/lib/notebook/document";
import { formRequest, makeTeam, params, resetDatabase } from "./support/fixtures";
import { signInAs, signOut } from "./support/session";

const run = promisify(execFile);
const folder = mkdtempSync(path.join(tmpdir(), "holonomy-backup-"));
const restoredDatabase = `${new URL(env.DATABASE_URL).pathname.slice(1)}_restored`;
const restoredUrl = Object.assign(new URL(env.DATABASE_URL), { pathname: `/${restoredDatabase}` }).toString();
const restoredBucket = buckets.restored;

/** Runs one of the project's scripts with the test environment and overrides. */
async function script(command: string, args: string[], overrides: Record<string, string> = {}): Promise<string> {
  const { stdout } = await run(command, args, {
    cwd: path.resolve(import.meta.dirname, "../.."),
    env: { ...process.env, ...overrides, AWS_SDK_JS_NODE_VERSION_SUPPORT_WARNING_DISABLED: "true" },
    maxBuffer: 64 * 1024 * 1024,
    timeout: 180_000,
  });
  return stdout;
}

let fileKey: string;

beforeAll(async () => {
  await ensureBucket();
  await resetDatabase();
  const { team, members } = await makeTeam("Backup rig");
  const derivation = await createDerivation({
    teamId: team.id,
    title: "Trolley with swinging load",
    ownerId: members.analyst.id,
    content: modelToDocument({
      title: "Trolley with swinging load",
      coordinates: [{ name: "x", unit: "m" }],
      parameters: [{ name: "m", unit: "kg", value: 120 }],
      kinetic: "1/2*m*x'^2",
      potential: "0",
    }),
  });
  await updateDerivationById({ id: derivation.id, actorId: members.analyst.id, changes: { title: "Trolley with swinging load — rev. B" } });
  // An upload puts an object in storage and a row that names its key.
  signInAs(members.analyst);
  const form = new FormData();
  form.set("file", new File(["# bench run 3\nt [s], x [mm]\n0, 0\n0.5, 12.5\n1, 50\n"], "bench-run-3.csv", { type: "text/csv" }));
  const response = await derivationFilesRoute.POST(await formRequest(`/api/derivations/${derivation.id}/files`, form), params({ id: derivation.id }));
  expect(response.status).toBe(201);
  signOut();
  fileKey = `derivations/${derivation.id}/files/`;
}, 60_000);

/** Removes a bucket of the test (it talks to the store directly here: the app never deletes buckets). */
async function removeBucket(bucket: string): Promise<void> {
  const s3 = new S3Client({
    endpoint: env.S3_ENDPOINT,
    region: env.S3_REGION,
    credentials: { accessKeyId: env.S3_ACCESS_KEY_ID, secretAccessKey: env.S3_SECRET_ACCESS_KEY },
    forcePathStyle: true,
  });
  try {
    for (;;) {
      const page = await s3.send(new ListObjectsV2Command({ Bucket: bucket }));
      const keys = (page.Contents ?? []).flatMap((item) => (item.Key ? [item.Key] : []));
      if (keys.length === 0) break;
      await Promise.all(keys.map((key) => s3.send(new DeleteObjectCommand({ Bucket: bucket, Key: key }))));
    }
    await s3.send(new DeleteBucketCommand({ Bucket: bucket }));
  } catch {
    // The bucket was never created (the restore failed before it): nothing to remove.
  } finally {
    s3.destroy();
  }
}

afterAll(async () => {
  rmSync(folder, { recursive: true, force: true });
  await removeBucket(buckets.source);
  await removeBucket(buckets.restored);
  await script("psql", [env.DATABASE_URL, "-c", `drop database if exists ${restoredDatabase} with (force)`]).catch(() => undefined);
  await closeDatabase();
}, 60_000);

describe("backup and restore", () => {
  it("restores into a fresh database and bucket with the same rows and objects", async () => {
    const source = await getTableDigests();

    await script("bash", ["scripts/backup.sh", folder]);
    const manifest = await readObjectsManifest(folder);
    expect(manifest.objects.map((entry) => entry.key)).toEqual([expect.stringMatching(new RegExp(`^${fileKey}`))]);

    // A fresh database beside the test database (the role may create databases, as in scripts/db.sh).
    await script("psql", [
      env.DATABASE_URL,
      "-v",
      "ON_ERROR_STOP=1",
      "-c",
      `drop database if exists ${restoredDatabase} with (force)`,
      "-c",
      `create database ${restoredDatabase}`,
    ]);
    await script("bash", ["scripts/restore.sh", folder], { DATABASE_URL: restoredUrl, S3_BUCKET: restoredBucket });

    const restored = JSON.parse(
      await script("npx", ["--no-install", "tsx", "--conditions=react-server", "scripts/backup-tool.ts", "digests"], {
        DATABASE_URL: restoredUrl,
        S3_BUCKET: restoredBucket,
      }),
    ) as { tables: Record<string, TableDigest>; objects: Record<string, string> };

    // Same tables, each with the same row count and the same content hash.
    expect(Object.keys(restored.tables).sort()).toEqual(Object.keys(source).sort());
    for (const [table, digest] of Object.entries(source)) expect(restored.tables[table], table).toEqual(digest);
    expect(source["public.derivations"]!.rows).toBe(1);
    expect(source["public.files"]!.rows).toBe(1);
    const counts = Object.entries(source).map(([table, { rows }]) => `${table} ${rows}`);
    console.info(`[backup] restored rows per table: ${counts.join(", ")}`);

    // Every object the backup holds is in the restored bucket with the same bytes.
    expect(Object.keys(restored.objects).sort()).toEqual(manifest.objects.map((entry) => entry.key).sort());
    for (const entry of manifest.objects) expect(restored.objects[entry.key], entry.key).toBe(entry.sha256);
    console.info(`[backup] restored ${manifest.objects.length} objects`);
  }, 300_000);

  it("refuses to restore over a database that already has tables", async () => {
    await expect(script("bash", ["scripts/restore.sh", folder], { DATABASE_URL: restoredUrl, S3_BUCKET: restoredBucket })).rejects.toThrow(
      /fresh, empty database/,
    );
  }, 120_000);
});
