/**
 * Edge-safe part of the Auth.js configuration (no database, no bcrypt), shared by
 * the proxy and the full configuration in auth.ts. Credentials sign-in requires
 * the JWT session strategy in Auth.js v5, so sessions are signed, encrypted
 * cookies that expire after SESSION_HOURS.
 */
import type { NextAuthConfig } from "next-auth";

export const SESSION_HOURS = 8;

export const authConfig = {
  pages: { signIn: "/sign-in" },
  session: { strategy: "jwt", maxAge: SESSION_HOURS * 3600 },
  trustHost: true,
  providers: [],
  callbacks: {
    jwt({ token, user }) {
      if (user?.id) token.uid = user.id;
      return token;
    },
    session({ session, token }) {
      if (typeof token.uid === "string") session.user.id = token.uid;
      return session;
    },
  },
} satisfies NextAuthConfig;
