/**
 * Edge-safe part of the Auth.js configuration (no database, no bcrypt), shared by
 * the proxy and the full configuration in auth.ts. Credentials sign-in requires
 * the JWT session strategy in Auth.js v5, so sessions are signed, encrypted
 * cookies that expire after SESSION_HOURS.
 */
import { CredentialsSignin, type NextAuthConfig } from "next-auth";

export const SESSION_HOURS = 8;

export const authConfig = {
  pages: { signIn: "/sign-in" },
  session: { strategy: "jwt", maxAge: SESSION_HOURS * 3600 },
  trustHost: true,
  // Shared by the proxy's instance too. Auth.js's own logger prints an error's cause and
  // details, and for an expired session those details hold the decoded token (user id,
  // e-mail, name); failed credentials would echo what the user typed. One line each, no
  // details: a name and a message say enough.
  logger: {
    error(error) {
      if (error instanceof CredentialsSignin) return;
      console.error("[auth]", error.name, error.message);
    },
  },
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
