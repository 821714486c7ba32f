import { afterAll, beforeAll, describe, expect, it } from "vitest";
import * as forgotRoute from "@/app/api/auth/forgot-password/route";
import * as resetRoute from "@/app/api/auth/reset-password/route";
import * as signUpRoute from "@/app/api/auth/sign-up/route";
import { closeDatabase } from "@/db/client";
import { createInvite } from "@/db/queries/invites";
import { getMembershipByTeamIdAndUserId } from "@/db/queries/teams";
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

async function resetTokenFor(email: string): Promise<string> {
  for (let attempt = 0; attempt < 20; attempt += 1) {
    const message = (await listCapturedMessages()).find((m) => m.to.some((to) => to.address === email));
    const link = message?.text.match(/\/reset-password\/(\S+)/);
    if (link) return link[1];
    await new Promise((resolve) => setTimeout(resolve, 100));
  }
  throw new Error(`no reset e-mail for ${email}`);
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
});

describe("sign-up", () => {
  it("creates an account and refuses the same e-mail twice with a field error", async () => {
    const email = uniqueEmail("signup");
    const first = await signUpRoute.POST(jsonRequest("/", "POST", { name: "Rhea Okafor", email, password: "long-enough-pass" }), params({}));
    expect(first.status).toBe(201);
    const second = await signUpRoute.POST(jsonRequest("/", "POST", { name: "Rhea Okafor", email: email.toUpperCase(), password: "long-enough-pass" }), params({}));
    expect(second.status).toBe(409);
    expect((await second.json()).error.fieldErrors.email[0]).toMatch(/already exists/);
  });

  it("reports every invalid field", async () => {
    const response = await signUpRoute.POST(jsonRequest("/", "POST", { name: "", email: "x", password: "short" }), params({}));
    expect(response.status).toBe(400);
    expect(Object.keys((await response.json()).error.fieldErrors).sort()).toEqual(["email", "name", "password"]);
  });

  it("joins the inviting team when signing up with an invitation", async () => {
    const { team, members } = await makeTeam("Seat rig lab");
    const email = uniqueEmail("invited");
    const { token, tokenHash } = createToken();
    await createInvite({ teamId: team.id, email, role: "analyst", tokenHash, invitedById: members.lead.id, expiresAt: new Date(Date.now() + 60_000) });
    const response = await signUpRoute.POST(jsonRequest("/", "POST", { name: "New Analyst", email, password: "long-enough-pass", inviteToken: token }), params({}));
    expect(response.status).toBe(201);
    const body = await response.json();
    expect(body.teamId).toBe(team.id);
    const membership = await getMembershipByTeamIdAndUserId({ teamId: team.id, userId: body.user.id });
    expect(membership?.role).toBe("analyst");
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
