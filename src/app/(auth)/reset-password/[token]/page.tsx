import type { Metadata } from "next";
import Link from "next/link";
import { redirect } from "next/navigation";
import { getDb } from "@/server/db/client";
import { AppError } from "@/server/http/errors";
import { getPasswordReset, resetPassword, resetTokenSchema } from "@/server/services/password-reset";
import { checkPasswordPolicy } from "@/server/services/sign-in";
import { PublicCard } from "@/components/public-card";

export const metadata: Metadata = { title: "Choose a new password", referrer: "no-referrer" };

const PROBLEMS: Record<string, string> = {
  differ: "The two passwords differ.",
  short: "Use at least 12 characters.",
  long: "Use at most 128 characters.",
  repeated: "A password of one repeated character is too easy to guess.",
  failed: "Something went wrong on our side. Try again.",
};

function problemKey(password: string): string | null {
  const problem = checkPasswordPolicy(password);
  if (!problem) return null;
  if (problem.includes("at least")) return "short";
  if (problem.includes("at most")) return "long";
  return "repeated";
}

/**
 * Public server action: the token in the form is the credential. Problems come
 * back as a short code in the query string (never the password), so the page
 * works without JavaScript.
 */
async function resetPasswordAction(form: FormData): Promise<void> {
  "use server";
  const token = resetTokenSchema.safeParse(String(form.get("token") ?? ""));
  if (!token.success) redirect("/sign-in");
  const here = `/reset-password/${token.data}`;
  const password = String(form.get("password") ?? "");
  if (password !== String(form.get("confirm") ?? "")) redirect(`${here}?problem=differ`);
  const weak = problemKey(password);
  if (weak) redirect(`${here}?problem=${weak}`);
  try {
    await resetPassword(getDb(), { token: token.data, password });
  } catch (err) {
    // A used or expired link: the page itself explains it on reload.
    if (err instanceof AppError) redirect(here);
    console.error("[password-reset] failed:", err instanceof Error ? err.message : "unknown error");
    redirect(`${here}?problem=failed`);
  }
  redirect("/sign-in?reason=password_reset");
}

export default async function ResetPasswordPage({
  params,
  searchParams,
}: {
  params: Promise<{ token: string }>;
  searchParams: Promise<{ problem?: string }>;
}) {
  const { token } = await params;
  const { problem: key } = await searchParams;
  // Own keys only: "?problem=__proto__" must not reach Object.prototype (it crashed the page).
  const problem = key && Object.hasOwn(PROBLEMS, key) ? PROBLEMS[key] : undefined;
  let email: string | null = null;
  let unusable: string | null = null;
  try {
    email = (await getPasswordReset(getDb(), token)).email;
  } catch (err) {
    if (!(err instanceof AppError)) throw err;
    unusable =
      err.code === "not_found"
        ? "This link is not valid. It may have been replaced by a newer one; ask for a new link."
        : err.message;
  }
  return (
    <PublicCard>
      {email ? (
        <>
          <h1>Choose a new password</h1>
          <p className="mb-6 mt-1 text-sm text-ink-soft">
            For <span className="font-mono">{email}</span>. Signing in afterwards uses the new password; a
            lock-out after failed attempts is lifted.
          </p>
          <form action={resetPasswordAction} className="space-y-4" data-testid="reset-password-form">
            <input type="hidden" name="token" value={token} />
            <input type="hidden" name="username" value={email} autoComplete="username" />
            <div>
              <label className="label" htmlFor="reset-password">
                New password (at least 12 characters)
              </label>
              <input
                id="reset-password"
                name="password"
                type="password"
                required
                minLength={12}
                maxLength={128}
                autoComplete="new-password"
                className="field"
              />
            </div>
            <div>
              <label className="label" htmlFor="reset-confirm">
                New password again
              </label>
              <input
                id="reset-confirm"
                name="confirm"
                type="password"
                required
                autoComplete="new-password"
                className="field"
              />
            </div>
            {problem ? (
              <p
                role="alert"
                data-testid="reset-error"
                className="rounded-md border border-bad/30 bg-bad/5 px-3 py-2 text-sm text-bad"
              >
                {problem}
              </p>
            ) : null}
            <button type="submit" className="btn w-full justify-center">
              Save the new password
            </button>
          </form>
        </>
      ) : (
        <>
          <h1>Link not usable</h1>
          <p role="alert" className="mt-3 text-sm">
            {unusable}
          </p>
          <p className="mt-6 text-sm">
            <Link href="/forgot-password">Ask for a new link</Link> · <Link href="/sign-in">Sign in</Link>
          </p>
        </>
      )}
    </PublicCard>
  );
}
