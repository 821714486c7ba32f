import "server-only";
import { env } from "@/lib/env";

/** Absolute links for e-mails, based on the configured public URL. */
export function absoluteUrl(path: string): string {
  return new URL(path, env.NEXTAUTH_URL).toString();
}

/** Where to go after sign-in: same-origin paths only, never another host. */
export function safeReturnPath(value: string | undefined, fallback = "/teams"): string {
  if (!value) return fallback;
  try {
    const url = new URL(value, env.NEXTAUTH_URL);
    const sameOrigin = url.origin === new URL(env.NEXTAUTH_URL).origin;
    const relative = value.startsWith("/") && !value.startsWith("//");
    return sameOrigin || relative ? `${url.pathname}${url.search}` : fallback;
  } catch {
    return fallback;
  }
}
