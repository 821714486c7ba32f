// A fresh database for a test that runs the app as separate processes: migrated,
// then seeded with one team (a member per role) by tests/support/seed-team.ts,
// each in a process of its own with the environment the app processes will get.
import { execFile } from "node:child_process";
import path from "node:path";
import { promisify } from "node:util";

const run = promisify(execFile);
const ROOT = path.resolve(import.meta.dirname, "../..");

export interface SeededTeam {
  teamId: string;
  password: string;
  members: Record<"lead" | "analyst" | "reviewer" | "viewer", { id: string; email: string }>;
}

/** Migrates the database `env.DATABASE_URL` names and seeds the team `name` into it. */
export async function migrateAndSeedTeam(env: NodeJS.ProcessEnv, name: string): Promise<SeededTeam> {
  await run(process.execPath, ["--import", "tsx", "scripts/migrate.ts"], { cwd: ROOT, env });
  const seeded = await run(process.execPath, ["--conditions=react-server", "--import", "tsx", "tests/support/seed-team.ts", name], { cwd: ROOT, env });
  return JSON.parse(seeded.stdout) as SeededTeam;
}
