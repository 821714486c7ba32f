import { execFileSync } from "node:child_process";
import { readFileSync } from "node:fs";
import path from "node:path";
import { sql } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import * as approvedRoute from "@/app/api/v1/derivations/[id]/approved/route";
import * as listRoute from "@/app/api/v1/derivations/route";
import { closeDatabase, db } from "@/db/client";
import { craneStudyCellId, craneStudyTitle, demoApiToken, demoApiTokenName, demoDerivations, demoTeam, demoUsers } from "@/db/seed/demo";
import { hashToken } from "@/lib/auth/tokens";
import { params, resetDatabase } from "./support/fixtures";

const root = path.resolve(import.meta.dirname, "../..");
const approvedTitle = demoDerivations.find((d) => d.status === "approved")!.title;

/** The seed exactly as `npm run db:seed` runs it, against this suite's database. */
function runSeed(): string {
  return execFileSync(process.execPath, ["--conditions=react-server", "--import", "tsx", "scripts/seed.ts"], {
    cwd: root,
    encoding: "utf8",
    env: process.env,
    timeout: 200_000,
  });
}

async function rows<T>(query: ReturnType<typeof sql>): Promise<T[]> {
  return (await db.execute(query)).rows as T[];
}

function bearer(url: string): Request {
  return new Request(`http://localhost${url}`, { headers: { authorization: `Bearer ${demoApiToken}`, "x-forwarded-for": "192.0.2.77" } });
}

let firstRun: string;
let secondRun: string;

beforeAll(async () => {
  await resetDatabase();
  firstRun = runSeed();
  secondRun = runSeed();
}, 420_000);

afterAll(async () => {
  await closeDatabase();
});

describe("the demo seed", () => {
  it("runs the crane's tolerance study once, to completion, with worst cases for the spec sheet", async () => {
    expect(firstRun).toContain(`${craneStudyTitle}: tolerance study completed (80 runs, 0 failed)`);
    expect(secondRun).toContain(`${craneStudyTitle}: tolerance study already there`);
    const studies = await rows<{
      state: string;
      total: number;
      done: number;
      worst: Record<string, { value: number; parameters: Record<string, number> }>;
    }>(sql`
      select s.state, s.total, s.done, s.aggregate->'worst' as worst from studies s join derivations d on d.id = s.derivation_id
      where d.title = ${craneStudyTitle} and s.cell_id = ${craneStudyCellId}`);
    expect(studies).toHaveLength(1);
    expect(studies[0]).toMatchObject({ state: "completed", total: 80, done: 80 });
    // A swinging load pulls more than its weight, m g (3 − 2 cos θ) ≈ m g (1 + θ²) at the bottom of a swing, and the
    // traverse adds at most a/g = 0.06: within 15 % above m g for swings under 0.25 rad (fact of the trade).
    const tension = studies[0]!.worst.rope_tension!;
    expect(tension.value).toBeGreaterThan(tension.parameters.m! * 9.81);
    expect(tension.value).toBeLessThan(1.15 * tension.parameters.m! * 9.81);
    expect(Math.abs(studies[0]!.worst.rope_angle!.value)).toBeLessThan(0.25);
  });

  it("approves the demo derivation once, through the analyst's changes, a review and the lead's approval", async () => {
    expect(firstRun).toContain(`${approvedTitle}: approved revision 1`);
    expect(secondRun).toContain(`${approvedTitle}: already approved`);
    const email = (role: string) => demoUsers.find((u) => u.role === role)!.email;
    const [derivation] = await rows<{ id: string; status: string; locked: boolean }>(
      sql`select d.id, d.status, d.locked_at is not null as locked from derivations d join teams t on t.id = d.team_id where t.slug = ${demoTeam.slug} and d.title = ${approvedTitle}`,
    );
    expect(derivation).toMatchObject({ status: "approved", locked: true });
    const approvals = await rows<{ approver: string; authors: string[]; number: number }>(sql`
      select approver.email as approver, r.number,
        array(select u.email from users u where u.id = any(r.author_ids)) as authors
      from approvals a join revisions r on r.id = a.revision_id join users approver on approver.id = a.approved_by_id
      where a.derivation_id = ${derivation!.id}`);
    expect(approvals).toEqual([{ approver: email("lead"), authors: [email("analyst")], number: 1 }]);
    const reviews = await rows<{ requester: string; reviewer: string; decision: string }>(sql`
      select requester.email as requester, reviewer.email as reviewer, ra.decision
      from review_requests rr join review_assignments ra on ra.request_id = rr.id
        join users requester on requester.id = rr.requested_by_id join users reviewer on reviewer.id = ra.reviewer_id
      where rr.derivation_id = ${derivation!.id}`);
    expect(reviews).toEqual([{ requester: email("analyst"), reviewer: email("reviewer"), decision: "signed_off" }]);
    // The other demo derivations keep their statuses.
    const statuses = await rows<{ title: string; status: string }>(
      sql`select d.title, d.status from derivations d join teams t on t.id = d.team_id where t.slug = ${demoTeam.slug}`,
    );
    expect(Object.fromEntries(statuses.map((s) => [s.title, s.status]))).toEqual(Object.fromEntries(demoDerivations.map((d) => [d.title, d.status])));
  });

  it("creates one read-only demo token, stored as its hash, that pulls the approved equations as C", async () => {
    const tokens = await rows<{ name: string; token_hash: string; scope: string; revoked_at: Date | null }>(
      sql`select name, token_hash, scope, revoked_at from api_tokens`,
    );
    expect(tokens).toEqual([{ name: demoApiTokenName, token_hash: hashToken(demoApiToken), scope: "read", revoked_at: null }]);

    const list = await (await listRoute.GET(bearer("/api/v1/derivations"), params({}))).json();
    expect(list.derivations.map((d: { title: string }) => d.title)).toEqual([approvedTitle]);
    const link: string = list.derivations[0].links.approved;
    const response = await approvedRoute.GET(bearer(`${link}?language=c`), params({ id: list.derivations[0].id }));
    expect(response.status).toBe(200);
    const body = await response.json();
    expect(body.revision.number).toBe(1);
    expect(body.code).toMatchObject({ language: "c", filename: expect.stringMatching(/\.c$/) });
    // The seed derived and stored the equations and the C code, so this pull read them.
    const [stored] = await rows<{ keys: string[] }>(sql`select array(select jsonb_object_keys(results)) as keys from revisions where id = ${body.revision.id}`);
    expect(stored?.keys.sort()).toEqual(["apiCode", "apiDerived"]);
  });

  it("is the token and curl line the README documents", () => {
    const readme = readFileSync(path.join(root, "README.md"), "utf8");
    expect(readme).toContain(demoApiToken);
    expect(readme).toContain(`curl -fsS -H "Authorization: Bearer ${demoApiToken}"`);
  });
});
