"use server";
// Sign-in and sign-out as server actions. Validation happens in the Credentials
// provider (auth.ts); here we only turn its failure codes into plain messages.
import { AuthError } from "next-auth";
import { headers } from "next/headers";
import { signIn, signOut } from "@/server/auth/auth";
import { clientKey, hitRateLimit } from "@/server/http/rate-limit";

export interface SignInState {
  error?: string;
  email?: string;
}

const MESSAGES: Record<string, string> = {
  unknown_email:
    "No account uses this e-mail address. Check the spelling, or ask your facility admin for an invitation.",
  wrong_password:
    "The password is not right for this account. After 5 failed attempts the account is locked for 15 minutes.",
  locked:
    "Too many failed attempts: this account is locked for 15 minutes. Try again later or ask your facility admin.",
  no_facility: "Your account does not belong to any facility yet. Ask your facility admin to add you.",
  invalid_input: "Enter a valid e-mail address and your password.",
};

export async function signInAction(_prev: SignInState, formData: FormData): Promise<SignInState> {
  const email = String(formData.get("email") ?? "");
  // Besides the per-account lock-out: at most 30 attempts a minute from one address.
  const who = clientKey(await headers());
  if (!hitRateLimit(`sign-in:${who}`, who === "direct" ? 60 : 30, 60_000).ok) {
    return { error: "Too many sign-in attempts from this address. Wait a minute and try again.", email };
  }
  try {
    await signIn("credentials", {
      email,
      password: String(formData.get("password") ?? ""),
      redirectTo: "/dashboard",
    });
    return {};
  } catch (err) {
    if (err instanceof AuthError) {
      const code = (err as AuthError & { code?: string }).code ?? "";
      return { error: MESSAGES[code] ?? "Sign-in failed. Try again.", email };
    }
    throw err; // the redirect after a successful sign-in
  }
}

export async function signOutAction(): Promise<void> {
  await signOut({ redirectTo: "/sign-in?reason=signed_out" });
}
