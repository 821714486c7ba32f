import { describe, expect, it } from "vitest";
import { resetPasswordSchema, signUpSchema } from "@/lib/validation/auth";
import { updateDerivationSchema } from "@/lib/validation/derivations";
import { fieldErrorsOf, parseOrThrow } from "@/lib/validation/parse";
import { inviteMemberSchema } from "@/lib/validation/teams";
import { AppError } from "@/lib/errors";

describe("request schemas", () => {
  it("normalises a valid sign-up", () => {
    const parsed = signUpSchema.parse({ name: "  Ada Kestrel ", email: " Ada@Example.TEST ", password: "long-enough-pass" });
    expect(parsed.name).toBe("Ada Kestrel");
    expect(parsed.email).toBe("Ada@Example.TEST");
  });

  it("reports every bad field at once", () => {
    const result = signUpSchema.safeParse({ name: "", email: "not-an-address", password: "short" });
    expect(result.success).toBe(false);
    const fieldErrors = fieldErrorsOf(result.error!);
    expect(Object.keys(fieldErrors).sort()).toEqual(["email", "name", "password"]);
    expect(fieldErrors.password?.[0]).toMatch(/10 characters/);
  });

  it("caps a new password at bcrypt's 72 bytes, counted in UTF-8", () => {
    expect(signUpSchema.safeParse({ name: "Ada", email: "a@b.test", password: "p".repeat(72) }).success).toBe(true);
    const tooLong = signUpSchema.safeParse({ name: "Ada", email: "a@b.test", password: "p".repeat(73) });
    expect(tooLong.success).toBe(false);
    expect(fieldErrorsOf(tooLong.error!).password?.[0]).toMatch(/at most 72 bytes/);
    // 36 "é" are 36 characters but 72 bytes; one more is 74 bytes.
    expect(signUpSchema.safeParse({ name: "Ada", email: "a@b.test", password: "é".repeat(36) }).success).toBe(true);
    const wide = resetPasswordSchema.safeParse({ token: "t", password: "é".repeat(37), confirmPassword: "é".repeat(37) });
    expect(fieldErrorsOf(wide.error!).password?.[0]).toMatch(/at most 72 bytes/);
  });

  it("requires the two new passwords to match", () => {
    const result = resetPasswordSchema.safeParse({ token: "t", password: "long-enough-pass", confirmPassword: "long-enough-past" });
    expect(result.success).toBe(false);
    expect(fieldErrorsOf(result.error!).confirmPassword).toEqual(["The two passwords differ."]);
  });

  it("accepts only the four roles for an invitation", () => {
    expect(inviteMemberSchema.safeParse({ email: "a@b.test", role: "viewer" }).success).toBe(true);
    expect(inviteMemberSchema.safeParse({ email: "a@b.test", role: "owner" }).success).toBe(false);
  });

  it("refuses an empty derivation update", () => {
    expect(updateDerivationSchema.safeParse({}).success).toBe(false);
    // The status moves only through review, approval and unlock, never by PATCH.
    expect(updateDerivationSchema.safeParse({ status: "in_review" }).success).toBe(false);
    expect(updateDerivationSchema.safeParse({ title: "Hoist drum", status: "approved" }).success).toBe(false);
    expect(updateDerivationSchema.safeParse({ title: "Hoist drum" }).success).toBe(true);
  });

  it("parseOrThrow raises bad_request:validation with field errors", () => {
    try {
      parseOrThrow(inviteMemberSchema, { email: "", role: "viewer" });
      expect.unreachable("an empty e-mail must be refused");
    } catch (error) {
      expect(error).toBeInstanceOf(AppError);
      expect((error as AppError).code).toBe("bad_request:validation");
      expect((error as AppError).fieldErrors?.email?.length).toBeGreaterThan(0);
    }
  });
});
