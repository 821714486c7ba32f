import "server-only";
import type { NextAuthOptions } from "next-auth";
import CredentialsProvider from "next-auth/providers/credentials";
import { clientAddress } from "@/lib/client-address";
import { env } from "@/lib/env";
import { signInSchema } from "@/lib/validation/auth";
import { authenticate } from "./authenticate";

// Error strings the sign-in form understands (next-auth passes them through).
export const signInErrors = {
  invalid: "CredentialsSignin",
  rateLimited: "RateLimited",
  unavailable: "Unavailable",
} as const;

/** Behind TLS (an https NEXTAUTH_URL) the auth cookies are Secure and carry the __Secure-/__Host- prefixes. */
export const secureCookies = new URL(env.NEXTAUTH_URL).protocol === "https:";

export const authOptions: NextAuthOptions = {
  secret: env.NEXTAUTH_SECRET,
  // next-auth's cookies are HttpOnly and SameSite=Lax; Secure follows the app's own scheme,
  // said here rather than left to next-auth's reading of process.env.
  useSecureCookies: secureCookies,
  session: { strategy: "jwt", maxAge: 7 * 24 * 60 * 60 },
  pages: { signIn: "/sign-in" },
  providers: [
    CredentialsProvider({
      name: "E-mail and password",
      credentials: {
        email: { label: "E-mail", type: "email" },
        password: { label: "Password", type: "password" },
      },
      async authorize(credentials, request) {
        const parsed = signInSchema.safeParse(credentials);
        if (!parsed.success) return null;
        const result = await authenticate({ ...parsed.data, clientAddress: clientAddress(request?.headers ?? {}) });
        if (result.status === "ok") return { id: result.user.id, email: result.user.email, name: result.user.name };
        if (result.status === "rate_limited") throw new Error(signInErrors.rateLimited);
        if (result.status === "unavailable") throw new Error(signInErrors.unavailable);
        return null;
      },
    }),
  ],
  callbacks: {
    async jwt({ token, user }) {
      if (user) token.uid = user.id;
      return token;
    },
    async session({ session, token }) {
      if (session.user && typeof token.uid === "string") session.user.id = token.uid;
      return session;
    },
  },
};
