import "server-only";
import { createHash } from "node:crypto";
import { mkdir, readFile, writeFile } from "node:fs/promises";
import path from "node:path";
import { z } from "zod";
import { ensureBucket, getObjectRecord, listAllObjects, putObject } from "@/lib/storage";

/**
 * The object store's half of a backup: every object of the bucket as a file
 * named by the SHA-256 of its key, and a manifest with each key, content type,
 * size and the SHA-256 of its bytes. The database's half is a pg_dump archive
 * (scripts/backup.sh); rows hold the keys, so both halves are needed.
 */

export const OBJECTS_FOLDER = "objects";
export const OBJECTS_MANIFEST = "objects.json";

const manifestSchema = z.object({
  format: z.literal("holonomy-objects/1"),
  objects: z.array(
    z.object({
      key: z.string().min(1),
      file: z.string().regex(/^[0-9a-f]{64}$/),
      contentType: z.string(),
      size: z.number().int().nonnegative(),
      sha256: z.string().regex(/^[0-9a-f]{64}$/),
    }),
  ),
});

export type ObjectsManifest = z.infer<typeof manifestSchema>;
export type ObjectEntry = ObjectsManifest["objects"][number];

const sha256 = (data: string | Uint8Array) => createHash("sha256").update(data).digest("hex");

/** Objects copied at once: enough to hide the store's round trips, few enough for a small store. */
const CONCURRENCY = 8;

/** Runs `work` on every item with at most CONCURRENCY at a time; results keep the items' order. */
async function eachConcurrently<T, R>(items: readonly T[], work: (item: T, index: number) => Promise<R>): Promise<R[]> {
  const results = new Array<R>(items.length);
  let next = 0;
  const lanes = Array.from({ length: Math.min(CONCURRENCY, items.length) }, async () => {
    while (next < items.length) {
      const index = next++;
      results[index] = await work(items[index]!, index);
    }
  });
  await Promise.all(lanes);
  return results;
}

async function allKeys(): Promise<string[]> {
  const keys: string[] = [];
  for await (const { key } of listAllObjects()) keys.push(key);
  return keys;
}

/** Copies every object of the bucket into `folder` and writes the manifest; returns it. */
export async function dumpObjects(folder: string): Promise<ObjectsManifest> {
  await mkdir(path.join(folder, OBJECTS_FOLDER), { recursive: true });
  const copied = await eachConcurrently(await allKeys(), async (key): Promise<ObjectEntry | null> => {
    const record = await getObjectRecord({ key });
    // Deleted between listing and reading: it was not part of the state any row points at.
    if (record === null) return null;
    const file = sha256(key);
    await writeFile(path.join(folder, OBJECTS_FOLDER, file), record.body);
    return { key, file, contentType: record.contentType, size: record.body.byteLength, sha256: sha256(record.body) };
  });
  const objects = copied.filter((entry): entry is ObjectEntry => entry !== null);
  objects.sort((a, b) => (a.key < b.key ? -1 : a.key > b.key ? 1 : 0));
  const manifest: ObjectsManifest = { format: "holonomy-objects/1", objects };
  await writeFile(path.join(folder, OBJECTS_MANIFEST), JSON.stringify(manifest, null, 2) + "\n");
  return manifest;
}

/** Reads and checks a backup's object manifest. */
export async function readObjectsManifest(folder: string): Promise<ObjectsManifest> {
  const text = await readFile(path.join(folder, OBJECTS_MANIFEST), "utf8");
  return manifestSchema.parse(JSON.parse(text));
}

/**
 * Puts every object of a backup into the bucket (created if missing), after
 * checking each file against the SHA-256 the manifest recorded, so a damaged
 * backup is refused before anything is written.
 */
export async function restoreObjects(folder: string): Promise<ObjectsManifest> {
  const manifest = await readObjectsManifest(folder);
  const bodies = await eachConcurrently(manifest.objects, async (entry) => {
    const body = new Uint8Array(await readFile(path.join(folder, OBJECTS_FOLDER, entry.file)));
    if (sha256(body) !== entry.sha256 || body.byteLength !== entry.size) {
      throw new Error(`the backup's copy of object "${entry.key}" does not match its recorded SHA-256; nothing was restored`);
    }
    return body;
  });
  await ensureBucket();
  await eachConcurrently(manifest.objects, (entry, index) => putObject({ key: entry.key, body: bodies[index]!, contentType: entry.contentType }));
  return manifest;
}

/** Each object of the bucket as key → SHA-256 of its bytes (to compare a restore with its source). */
export async function objectDigests(): Promise<Record<string, string>> {
  const keys = await allKeys();
  const hashes = await eachConcurrently(keys, async (key) => {
    const record = await getObjectRecord({ key });
    return record === null ? null : sha256(record.body);
  });
  const digests: Record<string, string> = {};
  keys.forEach((key, index) => {
    if (hashes[index] !== null) digests[key] = hashes[index]!;
  });
  return digests;
}
