import type { Metadata } from "next";
import Link from "next/link";
import { headers } from "next/headers";
import { redirect } from "next/navigation";
import { getDb } from "@/server/db/client";
import { clientKey, hitRateLimit } from "@/server/http/rate-limit";
import { requestPasswordReset, requestResetSchema } from "@/server/services/password-reset";
import { PublicCard } from "@/components/public-card";

export const metadata: Metadata = { title: "Forgot your password?" };

const NOTICES: Record<string, { tone: "ok" | "bad"; text: string }> = {
  sent: {
    tone: "ok",
    text: "If an account uses this address, we have sent it a link to choose a new password. The link works once, for one hour. Check your spam folder if nothing arrives within a few minutes.",
  },
  invalid: { tone: "bad", text: "Enter a valid e-mail address." },
  busy: { tone: "bad", text: "Too many requests from this address. Wait a few minutes and try again." },
};

/**
 * Public server action: always answers "sent" for a well-formed address, whether
 * or not an account uses it. Limited to 10 requests per 15 minutes per client
 * address and 3 an hour per e-mail address (the latter silently, so that it says
 * nothing about the account either).
 */
async function requestResetAction(form: FormData): Promise<void> {
  "use server";
  const who = clientKey(await headers());
  if (!hitRateLimit(`password-reset:${who}`, 10, 15 * 60_000).ok) redirect("/forgot-password?notice=busy");
  const parsed = requestResetSchema.safeParse({ email: String(form.get("email") ?? "") });
  if (!parsed.success) redirect("/forgot-password?notice=invalid");
  if (hitRateLimit(`password-reset-email:${parsed.data.email}`, 3, 60 * 60_000).ok) {
    try {
      await requestPasswordReset(getDb(), parsed.data.email);
    } catch (err) {
      // Same answer either way; the cause goes to the log only.
      console.error("[password-reset] request failed:", err instanceof Error ? err.message : "unknown error");
    }
  }
  redirect("/forgot-password?notice=sent");
}

export default async function ForgotPasswordPage({
  searchParams,
}: {
  searchParams: Promise<{ notice?: string }>;
}) {
  const { notice: key } = await searchParams;
  // Own keys only: "?notice=constructor" must not reach Object.prototype.
  const notice = key && Object.hasOwn(NOTICES, key) ? NOTICES[key] : undefined;
  return (
    <PublicCard>
      <h1>Forgot your password?</h1>
      <p className="mb-6 mt-1 text-sm text-ink-soft">
        Enter the e-mail address of your account. We send a link to choose a new password.
      </p>
      {notice ? (
        <p
          role={notice.tone === "ok" ? "status" : "alert"}
          data-testid="forgot-password-notice"
          className={
            notice.tone === "ok"
              ? "mb-4 rounded-md bg-accent-soft/60 px-3 py-2 text-sm text-accent-strong"
              : "mb-4 rounded-md border border-bad/30 bg-bad/5 px-3 py-2 text-sm text-bad"
          }
        >
          {notice.text}
        </p>
      ) : null}
      <form action={requestResetAction} className="space-y-4" data-testid="forgot-password-form">
        <div>
          <label className="label" htmlFor="reset-email">
            E-mail
          </label>
          <input
            id="reset-email"
            name="email"
            type="email"
            required
            maxLength={254}
            autoComplete="username"
            className="field"
          />
        </div>
        <button type="submit" className="btn w-full justify-center">
          Send the link
        </button>
      </form>
      <p className="mt-6 text-sm">
        <Link href="/sign-in">Back to sign-in</Link>
      </p>
    </PublicCard>
  );
}
