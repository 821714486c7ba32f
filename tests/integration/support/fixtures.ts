// Test data for integration tests, built through the same query functions the
// app uses. Every e-mail is unique per run so rate limits never collide.
import { sql } from "drizzle-orm";
import { db } from "@/db/client";
import { createTeamWithLead, upsertMembership } from "@/db/queries/teams";
import { createUser } from "@/db/queries/users";
import type { Team } from "@/db/schema";
import { hashPassword } from "@/lib/auth/password";
import type { SessionUser } from "@/lib/auth/session";
import type { MemberRole } from "@/lib/domain";

export const testPassword = "correct-horse-battery";
let counter = 0;
let passwordHash: string | undefined;

export function uniqueEmail(label: string): string {
  counter += 1;
  return `${label}-${Date.now().toString(36)}-${counter}@it.holonomy.test`;
}

export async function makeUser(label = "user"): Promise<SessionUser> {
  passwordHash ??= await hashPassword(testPassword);
  const user = await createUser({ email: uniqueEmail(label), name: `Test ${label}`, passwordHash });
  if (!user) throw new Error("fixture user already exists");
  return { id: user.id, email: user.email, name: user.name };
}

export interface TeamFixture {
  team: Team;
  members: Record<MemberRole, SessionUser>;
}

/** A team with one member per role. */
export async function makeTeam(name = "Hoist test bench"): Promise<TeamFixture> {
  const lead = await makeUser("lead");
  const team = await createTeamWithLead({ name, leadUserId: lead.id });
  const members = { lead } as Record<MemberRole, SessionUser>;
  for (const role of ["analyst", "reviewer", "viewer"] as const) {
    const user = await makeUser(role);
    await upsertMembership({ teamId: team.id, userId: user.id, role });
    members[role] = user;
  }
  return { team, members };
}

/**
 * Empties every table but the audit log, which refuses deletion (it is append-only); tests
 * read it per team, and every test makes its teams afresh. The schema itself was migrated
 * fresh by the test runner.
 */
export async function resetDatabase(): Promise<void> {
  await db.execute(sql`
    truncate table rate_limits, password_reset_tokens, invites, derivations, memberships, teams, users
    restart identity cascade
  `);
}

// Requests carry Content-Length as browsers send it; upload routes refuse bodies without one.
export function jsonRequest(url: string, method: string, body?: unknown): Request {
  const text = body === undefined ? undefined : typeof body === "string" ? body : JSON.stringify(body);
  return new Request(`http://localhost${url}`, {
    method,
    headers: text === undefined ? undefined : { "content-type": "application/json", "content-length": String(Buffer.byteLength(text)) },
    body: text,
  });
}

/** A multipart/form-data POST with its boundary and Content-Length, as a browser sends a form. */
export async function formRequest(url: string, form: FormData): Promise<Request> {
  const encoded = new Response(form);
  const body = new Uint8Array(await encoded.arrayBuffer());
  return new Request(`http://localhost${url}`, {
    method: "POST",
    headers: { "content-type": encoded.headers.get("content-type") ?? "", "content-length": String(body.byteLength) },
    body,
  });
}

export function params<T extends Record<string, string>>(value: T): { params: Promise<T> } {
  return { params: Promise.resolve(value) };
}

/**
 * Writes a derivation's content as given, past the API's validation: rows an
 * older Holonomy (or a bug) left behind, for the tests that read them.
 */
export async function storeRawContent(derivationId: string, content: unknown): Promise<void> {
  await db.execute(sql`update derivations set content = ${JSON.stringify(content)}::jsonb where id = ${derivationId}`);
}
