import { describe, expect, it } from "vitest";
import { ConflictError, NotFoundError, NotPermittedError } from "@/db/errors";
import { AppError, appErrorFromBody, isDatabaseUnavailable, statusByKind, toAppError } from "@/lib/errors";

describe("AppError", () => {
  it("maps each kind to its HTTP status", () => {
    expect(new AppError("unauthorized:session").status).toBe(401);
    expect(new AppError("forbidden:derivation").status).toBe(403);
    expect(new AppError("not_found:derivation").status).toBe(404);
    expect(new AppError("bad_request:validation").status).toBe(400);
    expect(new AppError("rate_limited:sign_in").status).toBe(429);
    expect(new AppError("unavailable:database").status).toBe(503);
    expect(new AppError("conflict:member").status).toBe(409);
    expect(statusByKind.internal).toBe(500);
  });

  it("answers with the JSON error shape and no stack", async () => {
    const response = new AppError("bad_request:validation", undefined, { fieldErrors: { title: ["Give the derivation a title."] } }).toResponse();
    expect(response.status).toBe(400);
    const body = await response.json();
    expect(body).toEqual({
      error: { code: "bad_request:validation", message: "Some fields need attention.", fieldErrors: { title: ["Give the derivation a title."] } },
    });
    expect(JSON.stringify(body)).not.toContain("at ");
  });

  it("round-trips through the client fetcher's parser", () => {
    const original = new AppError("forbidden:derivation", "Your role (viewer) does not allow derivation:create.");
    const rebuilt = appErrorFromBody(original.toJSON(), 403);
    expect(rebuilt).toBeInstanceOf(AppError);
    expect(rebuilt.code).toBe(original.code);
    expect(rebuilt.message).toBe(original.message);
  });

  it("falls back to the HTTP status for bodies that are not ours", () => {
    expect(appErrorFromBody("<html>", 404).code).toBe("not_found:api");
    expect(appErrorFromBody(null, 502).code).toBe("internal:api");
  });

  it("keeps a digest that survives production error scrubbing", () => {
    expect(new AppError("unavailable:database").digest).toBe("holonomy:unavailable:database");
  });
});

describe("toAppError", () => {
  it("turns a refused connection into 503 unavailable:database", () => {
    const refused = Object.assign(new Error("connect ECONNREFUSED 127.0.0.1:54329"), { code: "ECONNREFUSED" });
    expect(isDatabaseUnavailable(refused)).toBe(true);
    expect(toAppError(new Error("query failed", { cause: refused })).code).toBe("unavailable:database");
    expect(isDatabaseUnavailable(new AggregateError([refused]))).toBe(true);
  });

  it("hides unexpected errors behind a generic 500", () => {
    const error = toAppError(new Error('column "secret" does not exist'));
    expect(error.code).toBe("internal:api");
    expect(error.message).not.toContain("secret");
  });

  it("passes AppErrors through unchanged", () => {
    const error = new AppError("not_found:team");
    expect(toAppError(error)).toBe(error);
  });

  it("answers data errors from db/ with the status of their kind and their own message", () => {
    const missing = toAppError(new NotFoundError("member", "That person is not a member of this team."));
    expect([missing.code, missing.status, missing.message]).toEqual(["not_found:member", 404, "That person is not a member of this team."]);
    const used = toAppError(new ConflictError("password_reset", "This reset link has expired or was already used. Ask for a new one."));
    expect([used.code, used.status]).toEqual(["conflict:password_reset", 409]);
    const elsewhere = toAppError(new NotPermittedError("invite", "This invite was sent to a@example.com."));
    expect([elsewhere.code, elsewhere.status, elsewhere.message]).toEqual(["forbidden:invite", 403, "This invite was sent to a@example.com."]);
  });
});
