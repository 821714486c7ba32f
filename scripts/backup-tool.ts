// Backup and restore of the database (pg_dump / pg_restore, custom format) and the
// object store, run by scripts/backup.sh and scripts/restore.sh through
// tsx --conditions=react-server (like the seed script):
//   backup FOLDER     FOLDER/database.dump, FOLDER/objects/ + objects.json, FOLDER/backup.json
//   restore FOLDER    into the (fresh, empty) database and bucket the environment names
//   digests           prints { tables: { "schema.table": { rows, md5 } }, objects: { key: sha256 } }
import { execFile } from "node:child_process";
import { existsSync } from "node:fs";
import { mkdir, writeFile } from "node:fs/promises";
import path from "node:path";
import { promisify } from "node:util";
import { closeDatabase } from "@/db/client";
import { countUserTables, getTableDigests } from "@/db/queries/table-digests";
import { dumpObjects, objectDigests, readObjectsManifest, restoreObjects } from "@/lib/backup/objects";
import { env } from "@/lib/env";

const run = promisify(execFile);
const DUMP_FILE = "database.dump";
const log = (message: string) => console.error(`[holonomy] ${message}`);

async function backup(folder: string): Promise<void> {
  if (existsSync(path.join(folder, DUMP_FILE))) throw new Error(`${folder} already holds a backup; choose another folder`);
  await mkdir(folder, { recursive: true });
  // The database first: rows name object keys, so every key the dump holds was
  // written before the objects are copied (an object added after the dump is
  // harmless; one deleted after it is the only gap, as with any online backup).
  log("dumping the database");
  await run("pg_dump", ["--format=custom", "--no-owner", "--no-acl", "--file", path.join(folder, DUMP_FILE), env.DATABASE_URL], {
    env: { ...process.env, PGCONNECT_TIMEOUT: "10" },
  });
  log(`copying the object store (bucket ${env.S3_BUCKET})`);
  const manifest = await dumpObjects(folder);
  const { stdout: version } = await run("pg_dump", ["--version"]);
  await writeFile(
    path.join(folder, "backup.json"),
    JSON.stringify({ format: "holonomy-backup/1", createdAt: new Date().toISOString(), pgDump: version.trim(), objects: manifest.objects.length }, null, 2) +
      "\n",
  );
  log(`backup written to ${folder} (${manifest.objects.length} objects)`);
}

async function restore(folder: string): Promise<void> {
  if (!existsSync(path.join(folder, DUMP_FILE))) throw new Error(`${path.join(folder, DUMP_FILE)} not found`);
  // Checked before anything is written: a damaged manifest stops the restore here.
  await readObjectsManifest(folder);
  const tables = await countUserTables();
  if (tables > 0) throw new Error(`the target database already has ${tables} tables; restore into a fresh, empty database`);
  log("restoring the database");
  // One transaction: a failure leaves the database as it was.
  await run("pg_restore", ["--no-owner", "--no-acl", "--exit-on-error", "--single-transaction", "--dbname", env.DATABASE_URL, path.join(folder, DUMP_FILE)], {
    env: { ...process.env, PGCONNECT_TIMEOUT: "10" },
  });
  log(`restoring the object store (bucket ${env.S3_BUCKET})`);
  const manifest = await restoreObjects(folder);
  log(`restored ${folder} (${manifest.objects.length} objects)`);
}

async function main(command: string | undefined, folder: string | undefined): Promise<void> {
  const needFolder = (): string => {
    if (!folder) throw new Error(`${command} needs the backup folder`);
    return folder;
  };
  try {
    switch (command) {
      case "backup":
        return await backup(needFolder());
      case "restore":
        return await restore(needFolder());
      case "digests": {
        const [tables, objects] = [await getTableDigests(), await objectDigests()];
        process.stdout.write(JSON.stringify({ tables, objects }) + "\n");
        return;
      }
      default:
        throw new Error(`unknown command "${command ?? ""}" (backup FOLDER, restore FOLDER, digests)`);
    }
  } finally {
    await closeDatabase();
  }
}

main(process.argv[2], process.argv[3]).catch((error: unknown) => {
  const detail = error instanceof Error ? (error as Error & { stderr?: string }).stderr?.trim() || error.message : String(error);
  console.error(`[holonomy] ${process.argv[2] ?? "backup"} failed: ${detail}`);
  process.exit(1);
});
