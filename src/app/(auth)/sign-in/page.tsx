import type { Metadata } from "next";
import Link from "next/link";
import { SignInForm } from "./sign-in-form";

export const metadata: Metadata = { title: "Sign in" };

const REASONS: Record<string, string> = {
  expired: "Your session has expired. Sign in again to continue.",
  signed_out: "You have signed out.",
  no_facility: "Your account does not belong to any facility yet.",
  invited: "You have joined the facility. Sign in with your e-mail address and password.",
  password_reset: "Your new password is saved. Sign in with it.",
};

export default async function SignInPage({ searchParams }: { searchParams: Promise<{ reason?: string }> }) {
  const { reason } = await searchParams;
  // Own keys only: "?reason=constructor" must not reach Object.prototype (it crashed the page).
  const notice = reason && Object.hasOwn(REASONS, reason) ? REASONS[reason] : undefined;
  return (
    <main className="flex min-h-screen items-center justify-center px-4">
      <div className="grid w-full max-w-3xl overflow-hidden rounded-xl border border-paper-line bg-paper-card shadow-sm md:grid-cols-2">
        <section className="bg-accent-strong p-8 text-white">
          <div className="flex items-center gap-2">
            <img src="/icon.svg" alt="" width={28} height={28} />
            <span className="text-lg font-semibold">Beadbench</span>
          </div>
          <p className="mt-6 text-sm leading-relaxed text-accent-soft">
            Monthly bead checks for every objective, depth profiles against theory, and a logbook that shows
            whether a lens still resolves what it should.
          </p>
          <ul className="mt-6 space-y-2 text-sm text-white/90">
            <li>· Lateral and axial FWHM at every depth</li>
            <li>· Refractive-index mismatch, predicted and measured</li>
            <li>· Control limits and service-visit comparisons</li>
          </ul>
        </section>
        <section className="p-8">
          <h1>Sign in</h1>
          <p className="mb-6 mt-1 text-sm text-ink-soft">Use the e-mail address your facility registered.</p>
          {notice ? (
            <p
              role="status"
              className="mb-4 rounded-md bg-accent-soft/60 px-3 py-2 text-sm text-accent-strong"
            >
              {notice}
            </p>
          ) : null}
          <SignInForm />
          <p className="mt-4 text-sm">
            <Link href="/forgot-password">Forgot your password?</Link>
          </p>
        </section>
      </div>
    </main>
  );
}
