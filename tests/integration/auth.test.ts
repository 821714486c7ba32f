import { afterAll, beforeAll, describe, expect, it } from "vitest";
import * as forgotRoute from "@/app/api/auth/forgot-password/route";
import * as resetRoute from "@/app/api/auth/reset-password/route";
import * as signUpRoute from "@/app/api/auth/sign-up/route";
import { closeDatabase } from "@/db/client";
import { acceptInviteByTokenHash, createInvite } from "@/db/queries/invites";
import { getMembershipByTeamIdAndUserId } from "@/db/queries/teams";
import { getUserByEmail } from "@/db/queries/users";
import { authenticate } from "@/lib/auth/authenticate";
import { createToken } from "@/lib/auth/tokens";
import { env } from "@/lib/env";
import { listCapturedMessages } from "@/lib/mailbox";
import { jsonRequest, makeTeam, makeUser, params, resetDatabase, testPassword, uniqueEmail } from "./support/fixtures";

beforeAll(async () => {
  await resetDatabase();
});
afterAll(async () => {
  await closeDatabase();
});

// A request as Next.js hands it to a route handler, with the client's address.
function requestFrom(address: string, body: unknown): Request {
  return new Request("http://localhost/", {
    method: "POST",
    headers: { "content-type": "application/json", "x-forwarded-for": address },
    body: JSON.stringify(body),
  });
}

async function resetTokenFor(email: string): Promise<string> {
  for (let attempt = 0; attempt < 20; attempt += 1) {
    const message = (await listCapturedMessages()).find((m) => m.to.some((to) => to.address === email));
    const link = message?.text.match(/\/reset-password\/(\S+)/);
    if (link?.[1]) return link[1];
    await new Promise((resolve) => setTimeout(resolve, 100));
  }
  throw new Error(`no reset e-mail for ${email}`);
}

async function subjectsTo(email: string, count: number): Promise<string[]> {
  let subjects: string[] = [];
  for (let attempt = 0; attempt < 20 && subjects.length < count; attempt += 1) {
    if (attempt > 0) await new Promise((resolve) => setTimeout(resolve, 100));
    subjects = (await listCapturedMessages()).filter((m) => m.to.some((to) => to.address === email)).map((m) => m.subject);
  }
  return subjects;
}

describe("authenticate", () => {
  it("accepts the right password, case-insensitively on the e-mail", async () => {
    const user = await makeUser("signin");
    const result = await authenticate({ email: user.email.toUpperCase(), password: testPassword });
    expect(result.status).toBe("ok");
  });

  it("gives the same answer for a wrong password and an unknown e-mail", async () => {
    const user = await makeUser("wrongpw");
    expect(await authenticate({ email: user.email, password: "not-the-password" })).toEqual({ status: "invalid" });
    expect(await authenticate({ email: uniqueEmail("nobody"), password: "not-the-password" })).toEqual({ status: "invalid" });
  });

  it("locks an address after repeated failures, even for the right password", async () => {
    const user = await makeUser("ratelimit");
    for (let attempt = 0; attempt < env.SIGN_IN_MAX_FAILURES; attempt += 1) {
      expect((await authenticate({ email: user.email, password: `guess-${attempt}` })).status).toBe("invalid");
    }
    expect((await authenticate({ email: user.email, password: testPassword })).status).toBe("rate_limited");
  });

  it("blocks a client address after many failures across e-mails, counting failures only", async () => {
    const user = await makeUser("byaddress");
    const address = "198.51.100.23";
    // Successful sign-ins from a shared address never count.
    for (let attempt = 0; attempt < 3; attempt += 1) {
      expect((await authenticate({ email: user.email, password: testPassword, clientAddress: address })).status).toBe("ok");
    }
    for (let attempt = 0; attempt < env.SIGN_IN_MAX_FAILURES_PER_ADDRESS; attempt += 1) {
      // A different (unknown) e-mail each time, so the per-e-mail lock never triggers.
      const result = await authenticate({ email: uniqueEmail(`spray${attempt}`), password: "not-the-password", clientAddress: address });
      expect(result).toEqual({ status: "invalid" });
    }
    expect((await authenticate({ email: user.email, password: testPassword, clientAddress: address })).status).toBe("rate_limited");
    expect((await authenticate({ email: user.email, password: testPassword, clientAddress: "198.51.100.24" })).status).toBe("ok");
  });
});

describe("sign-up", () => {
  it("answers a new and a registered e-mail the same way, and e-mails the existing account instead", async () => {
    const email = uniqueEmail("signup");
    const first = await signUpRoute.POST(jsonRequest("/", "POST", { name: "Rhea Okafor", email, password: "long-enough-pass" }), params({}));
    expect(first.status).toBe(202);
    expect((await authenticate({ email, password: "long-enough-pass" })).status).toBe("ok");

    const second = await signUpRoute.POST(
      jsonRequest("/", "POST", { name: "Someone Else", email: email.toUpperCase(), password: "another-long-pass" }),
      params({}),
    );
    expect(second.status).toBe(first.status);
    expect(await second.json()).toEqual(await first.json());
    // The existing account is untouched: its password still works, the second one does not.
    expect((await authenticate({ email, password: "long-enough-pass" })).status).toBe("ok");
    expect((await authenticate({ email, password: "another-long-pass" })).status).toBe("invalid");
    // Each attempt sent one message: the welcome, then the notice to the existing account.
    const subjects = await subjectsTo(email, 2);
    expect(subjects).toEqual(expect.arrayContaining(["Your Holonomy account is ready", "Someone tried to create a Holonomy account with your address"]));
  });

  it("reports every invalid field", async () => {
    const response = await signUpRoute.POST(jsonRequest("/", "POST", { name: "", email: "x", password: "short" }), params({}));
    expect(response.status).toBe(400);
    expect(Object.keys((await response.json()).error.fieldErrors).sort()).toEqual(["email", "name", "password"]);
  });

  it("leaves an invitation to the signed-in account: sign-up itself neither spends nor reveals it", async () => {
    const { team, members } = await makeTeam("Seat rig lab");
    const email = uniqueEmail("invited");
    const { token, tokenHash } = createToken();
    await createInvite({ teamId: team.id, email, role: "analyst", tokenHash, invitedById: members.lead.id, expiresAt: new Date(Date.now() + 60_000) });
    const response = await signUpRoute.POST(
      jsonRequest("/", "POST", { name: "New Analyst", email, password: "long-enough-pass", inviteToken: token }),
      params({}),
    );
    expect(response.status).toBe(202);
    const user = await getUserByEmail({ email });
    expect(user).not.toBeNull();
    expect(await getMembershipByTeamIdAndUserId({ teamId: team.id, userId: user!.id })).toBeNull();
    // The form accepts it next, signed in (POST /api/invites/{token}/accept runs this).
    const { membership } = await acceptInviteByTokenHash({ tokenHash, userId: user!.id, userEmail: user!.email });
    expect(membership).toMatchObject({ teamId: team.id, role: "analyst" });
  });
});

describe("sign-up and password-reset rate limits", () => {
  it("limits sign-ups per e-mail and per client address with 429 rate_limited:sign_up", async () => {
    const email = uniqueEmail("repeat");
    const body = { name: "Ines Varga", email, password: "long-enough-pass" };
    expect((await signUpRoute.POST(requestFrom("203.0.113.40", body), params({}))).status).toBe(202);
    // 5 attempts per e-mail per hour (lib/auth/rate-limit.ts), whatever their outcome.
    for (let attempt = 1; attempt < 5; attempt += 1) {
      expect((await signUpRoute.POST(requestFrom(`203.0.113.${41 + attempt}`, body), params({}))).status).toBe(202);
    }
    const limited = await signUpRoute.POST(requestFrom("203.0.113.50", body), params({}));
    expect(limited.status).toBe(429);
    expect((await limited.json()).error.code).toBe("rate_limited:sign_up");

    const address = "203.0.113.60";
    for (let attempt = 0; attempt < 20; attempt += 1) {
      const response = await signUpRoute.POST(requestFrom(address, { ...body, email: uniqueEmail(`burst${attempt}`) }), params({}));
      expect(response.status).toBe(202);
    }
    const burst = await signUpRoute.POST(requestFrom(address, { ...body, email: uniqueEmail("burst-extra") }), params({}));
    expect(burst.status).toBe(429);
    expect((await burst.json()).error.code).toBe("rate_limited:sign_up");
  });

  it("limits reset requests per e-mail and per client address, the same for known and unknown e-mails", async () => {
    const user = await makeUser("resetlimit");
    const ghost = uniqueEmail("resetghost");
    for (let attempt = 0; attempt < 5; attempt += 1) {
      expect((await forgotRoute.POST(requestFrom(`192.0.2.${attempt + 1}`, { email: user.email }), params({}))).status).toBe(200);
      expect((await forgotRoute.POST(requestFrom(`192.0.2.${attempt + 101}`, { email: ghost }), params({}))).status).toBe(200);
    }
    const known = await forgotRoute.POST(requestFrom("192.0.2.200", { email: user.email }), params({}));
    const unknown = await forgotRoute.POST(requestFrom("192.0.2.201", { email: ghost }), params({}));
    expect(known.status).toBe(429);
    expect(unknown.status).toBe(429);
    expect(await known.json()).toEqual(await unknown.json());

    const address = "192.0.2.250";
    for (let attempt = 0; attempt < 20; attempt += 1) {
      expect((await forgotRoute.POST(requestFrom(address, { email: uniqueEmail(`spread${attempt}`) }), params({}))).status).toBe(200);
    }
    const limited = await forgotRoute.POST(requestFrom(address, { email: uniqueEmail("spread-extra") }), params({}));
    expect(limited.status).toBe(429);
    expect((await limited.json()).error.code).toBe("rate_limited:password_reset");
  });
});

describe("password reset", () => {
  it("answers the same for unknown and known e-mails, and the link works once", async () => {
    const user = await makeUser("reset");
    const unknown = await forgotRoute.POST(jsonRequest("/", "POST", { email: uniqueEmail("ghost") }), params({}));
    const known = await forgotRoute.POST(jsonRequest("/", "POST", { email: user.email }), params({}));
    expect(unknown.status).toBe(200);
    expect(known.status).toBe(200);
    expect(await unknown.json()).toEqual(await known.json());

    const token = await resetTokenFor(user.email);
    const newPassword = "a-brand-new-password";
    const reset = await resetRoute.POST(jsonRequest("/", "POST", { token, password: newPassword, confirmPassword: newPassword }), params({}));
    expect(reset.status).toBe(200);
    expect((await authenticate({ email: user.email, password: newPassword })).status).toBe("ok");
    expect((await authenticate({ email: user.email, password: testPassword })).status).toBe("invalid");

    const reuse = await resetRoute.POST(jsonRequest("/", "POST", { token, password: newPassword, confirmPassword: newPassword }), params({}));
    expect(reuse.status).toBe(409);
  });
});
