// A stand-in for lib/auth/session used by integration tests: route handlers run
// for real against PostgreSQL, only "who is signed in" is set by the test.
//   vi.mock("@/lib/auth/session", async () => (await import("./support/session")).sessionModule);
//   signInAs(user) / signOut()
import type { SessionUser } from "@/lib/auth/session";
import { AppError } from "@/lib/errors";

let current: SessionUser | null = null;

export function signInAs(user: SessionUser | null): void {
  current = user;
}

export function signOut(): void {
  current = null;
}

export const sessionModule = {
  getSessionUser: async () => current,
  requireUser: async () => {
    if (!current) throw new AppError("unauthorized:session");
    return current;
  },
  requirePageUser: async () => {
    if (!current) throw new Error("page rendered without a session");
    return current;
  },
};
