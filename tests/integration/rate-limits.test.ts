// Rate limits through rate-limiter-flexible's PostgreSQL store: the counters
// are rows in `rate_limits`, shared by every process that uses the database.
import { sql } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";

vi.mock("@/lib/auth/session", async () => (await import("./support/session")).sessionModule);

import * as codeRoute from "@/app/api/derivations/[id]/code/route";
import * as evaluateRoute from "@/app/api/derivations/[id]/evaluate/route";
import * as filesRoute from "@/app/api/derivations/[id]/files/route";
import * as fitRoute from "@/app/api/derivations/[id]/fit/route";
import * as linearizeRoute from "@/app/api/derivations/[id]/linearize/route";
import * as runsRoute from "@/app/api/derivations/[id]/runs/route";
import * as importRoute from "@/app/api/teams/[teamId]/derivations/import/route";
import * as importNotebookRoute from "@/app/api/teams/[teamId]/derivations/import/notebook/route";
import * as invitesRoute from "@/app/api/teams/[teamId]/invites/route";
import { closeDatabase, db } from "@/db/client";
import { createDerivation } from "@/db/queries/derivations";
import { allowCollabConnection, consumeRateLimit, countAgainst, isRateLimited, rateLimits, type RateLimit } from "@/lib/auth/rate-limit";
import { blankDocument } from "@/lib/notebook/document";
import { closeEnginePool } from "@/lib/workers/engine-pool";
import { signInAs } from "./support/session";
import { jsonRequest, makeTeam, params, resetDatabase, uniqueEmail } from "./support/fixtures";

beforeAll(resetDatabase);
afterAll(async () => {
  await closeEnginePool();
  await closeDatabase();
});

/** Uses up `limit` for `key` in the current window, as that many requests would. */
async function exhaust(limit: RateLimit, key: string): Promise<void> {
  await db.execute(sql`
    insert into rate_limits (key, points, expire) values (${`${limit.name}:${key}`}, ${limit.points}, ${Date.now() + limit.durationSeconds * 1000})
    on conflict (key) do update set points = excluded.points, expire = excluded.expire
  `);
}

describe("the limiter", () => {
  it("counts per key in PostgreSQL and refuses past the limit with the time to wait", async () => {
    const limit: RateLimit = { name: "test:burst", points: 3, durationSeconds: 60 };
    for (let attempt = 0; attempt < 3; attempt += 1) expect(await consumeRateLimit(limit, "k1")).toEqual({ allowed: true });
    const refused = await consumeRateLimit(limit, "k1");
    expect(refused.allowed).toBe(false);
    if (!refused.allowed) expect(refused.retryAfterSeconds).toBeGreaterThan(0);
    expect(refused.allowed === false && refused.retryAfterSeconds <= 60).toBe(true);
    // Another key has its own counter; the row is in the table every instance reads.
    expect(await consumeRateLimit(limit, "k2")).toEqual({ allowed: true });
    const rows = await db.execute(sql`select key, points from rate_limits where key like 'test:burst:%' order by key`);
    expect(rows.rows).toEqual([
      { key: "test:burst:k1", points: 4 },
      { key: "test:burst:k2", points: 1 },
    ]);
  });

  it("counts failures without refusing, and reports when they reach the limit", async () => {
    const limit: RateLimit = { name: "test:failures", points: 2, durationSeconds: 60 };
    expect(await isRateLimited(limit, "addr")).toBe(false);
    await countAgainst(limit, "addr");
    expect(await isRateLimited(limit, "addr")).toBe(false);
    await countAgainst(limit, "addr");
    expect(await isRateLimited(limit, "addr")).toBe(true);
  });

  it("starts a new window once the old one has expired", async () => {
    const limit: RateLimit = { name: "test:window", points: 1, durationSeconds: 60 };
    await db.execute(sql`insert into rate_limits (key, points, expire) values ('test:window:old', 99, ${Date.now() - 1000})`);
    expect(await consumeRateLimit(limit, "old")).toEqual({ allowed: true });
  });

  it("limits collaboration connections per person and per address", async () => {
    const userId = "00000000-0000-4000-8000-00000000c011";
    for (let attempt = 0; attempt < rateLimits.collabConnectionsByUser.points; attempt += 1) {
      expect(await allowCollabConnection({ userId, address: "192.0.2.77" })).toEqual({ allowed: true });
    }
    const refused = await allowCollabConnection({ userId, address: "192.0.2.77" });
    expect(refused.allowed).toBe(false);
    // The address's own limit: many people behind one address, each within theirs.
    await exhaust(rateLimits.collabConnectionsByAddress, "192.0.2.78");
    expect((await allowCollabConnection({ userId: "00000000-0000-4000-8000-00000000c012", address: "192.0.2.78" })).allowed).toBe(false);
    expect((await allowCollabConnection({ userId: "00000000-0000-4000-8000-00000000c013", address: null })).allowed).toBe(true);
  });
});

describe("limited routes", () => {
  it("answer 429 with Retry-After once the caller's limit is used up, before doing the work", async () => {
    const { team, members } = await makeTeam("Limited bench");
    const lead = members.lead;
    const derivation = await createDerivation({ teamId: team.id, title: "Limited hoist", ownerId: lead.id, content: blankDocument("Limited hoist") });
    signInAs(lead);
    const onDerivation = params({ id: derivation.id });
    const onTeam = params({ teamId: team.id });
    const cases: Array<{ name: string; limit: RateLimit; key: string; code: string; send: () => Promise<Response> }> = [
      {
        name: "evaluate",
        limit: rateLimits.evaluateByUser,
        key: lead.id,
        code: "rate_limited:engine",
        send: () => evaluateRoute.POST(jsonRequest("/", "POST", {}), onDerivation),
      },
      {
        name: "linearize",
        limit: rateLimits.evaluateByUser,
        key: lead.id,
        code: "rate_limited:engine",
        send: () => linearizeRoute.POST(jsonRequest("/", "POST", {}), onDerivation),
      },
      {
        name: "code",
        limit: rateLimits.evaluateByUser,
        key: lead.id,
        code: "rate_limited:engine",
        send: () => codeRoute.POST(jsonRequest("/", "POST", {}), onDerivation),
      },
      {
        name: "simulate",
        limit: rateLimits.simulateByUser,
        key: lead.id,
        code: "rate_limited:simulation",
        send: () => runsRoute.POST(jsonRequest("/", "POST", {}), onDerivation),
      },
      {
        name: "fit",
        limit: rateLimits.simulateByUser,
        key: lead.id,
        code: "rate_limited:simulation",
        send: () => fitRoute.POST(jsonRequest("/", "POST", {}), onDerivation),
      },
      {
        name: "upload",
        limit: rateLimits.uploadsByUser,
        key: lead.id,
        code: "rate_limited:file",
        send: () => filesRoute.POST(jsonRequest("/", "POST", {}), onDerivation),
      },
      {
        name: "model import",
        limit: rateLimits.uploadsByUser,
        key: lead.id,
        code: "rate_limited:file",
        send: () => importRoute.POST(jsonRequest("/", "POST", {}), onTeam),
      },
      {
        name: "notebook import",
        limit: rateLimits.uploadsByUser,
        key: lead.id,
        code: "rate_limited:file",
        send: () => importNotebookRoute.POST(jsonRequest("/", "POST", {}), onTeam),
      },
      {
        name: "invite",
        limit: rateLimits.invitesByTeam,
        key: team.id,
        code: "rate_limited:invite",
        send: () => invitesRoute.POST(jsonRequest("/", "POST", { email: uniqueEmail("limited"), role: "viewer" }), onTeam),
      },
    ];
    for (const { name, limit, key, code, send } of cases) {
      await db.execute(sql`delete from rate_limits`);
      const before = await send();
      expect(before.status, name).not.toBe(429);
      await exhaust(limit, key);
      const response = await send();
      expect(response.status, name).toBe(429);
      expect(Number(response.headers.get("retry-after")), name).toBeGreaterThan(0);
      expect(((await response.json()) as { error: { code: string } }).error.code, name).toBe(code);
    }
  });
});
