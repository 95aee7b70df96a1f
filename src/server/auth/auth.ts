/**
 * Full Auth.js setup: e-mail + password (Credentials) checked against bcrypt hashes
 * with an account lock-out. Failure reasons travel as CredentialsSignin codes so
 * the sign-in page can say exactly what went wrong.
 */
import NextAuth, { CredentialsSignin } from "next-auth";
import Credentials from "next-auth/providers/credentials";
import { z } from "zod";
import { getDb } from "../db/client";
import { verifyCredentials, type SignInFailure } from "../services/sign-in";
import { authConfig } from "./auth.config";

class SignInRefused extends CredentialsSignin {
  constructor(reason: SignInFailure | "invalid_input") {
    super();
    this.code = reason;
  }
}

const credentialsSchema = z.object({
  email: z.string().trim().toLowerCase().email().max(320),
  password: z.string().min(1).max(256),
});

export const { handlers, auth, signIn, signOut } = NextAuth({
  ...authConfig,
  providers: [
    Credentials({
      credentials: { email: {}, password: {} },
      async authorize(raw) {
        const parsed = credentialsSchema.safeParse(raw);
        if (!parsed.success) throw new SignInRefused("invalid_input");
        const result = await verifyCredentials(getDb(), parsed.data.email, parsed.data.password);
        if (!result.ok) throw new SignInRefused(result.reason);
        return { id: result.user.id, email: result.user.email, name: result.user.name };
      },
    }),
  ],
});
