import type { Metadata } from "next";
import Link from "next/link";
import { redirect } from "next/navigation";
import { getDb } from "@/server/db/client";
import { AppError } from "@/server/http/errors";
import { applyUnsubscribeToken, MAIL_KIND_WORDS } from "@/server/services/mail-preferences";
import { PublicCard } from "@/components/public-card";

export const metadata: Metadata = { title: "Unsubscribe", referrer: "no-referrer" };

/** Public server action: the signed token is the credential. Switches the kind back on. */
async function resubscribeAction(form: FormData): Promise<void> {
  "use server";
  const token = String(form.get("token") ?? "");
  try {
    await applyUnsubscribeToken(getDb(), token, { subscribe: true });
  } catch (err) {
    if (!(err instanceof AppError)) throw err;
  }
  redirect(`/unsubscribe/${encodeURIComponent(token)}?resubscribed=1`);
}

/**
 * One-click unsubscribe: opening the link switches that kind of mail off for the
 * person and facility it names (the token is an HMAC, checked by the service), and
 * offers to undo it. `?resubscribed=1` only shows the state after an undo.
 */
export default async function UnsubscribePage({
  params,
  searchParams,
}: {
  params: Promise<{ token: string }>;
  searchParams: Promise<{ resubscribed?: string }>;
}) {
  const { token } = await params;
  const { resubscribed } = await searchParams;
  let result: Awaited<ReturnType<typeof applyUnsubscribeToken>> | null = null;
  try {
    result = await applyUnsubscribeToken(getDb(), token, { subscribe: resubscribed === "1" });
  } catch (err) {
    if (!(err instanceof AppError)) throw err;
  }
  return (
    <PublicCard>
      {!result ? (
        <>
          <h1>Link not usable</h1>
          <p role="alert" className="mt-3 text-sm" data-testid="unsubscribe-invalid">
            This unsubscribe link is not valid. You can choose which e-mails you get under Settings → E-mail.
          </p>
          <p className="mt-6 text-sm">
            <Link href="/settings">Settings</Link>
          </p>
        </>
      ) : result.on ? (
        <>
          <h1>Switched back on</h1>
          <p className="mt-3 text-sm" data-testid="unsubscribe-done">
            You will get {MAIL_KIND_WORDS[result.kind]} from {result.facilityName} again.
          </p>
          <p className="mt-6 text-sm">
            <Link href={`/unsubscribe/${encodeURIComponent(token)}`}>Unsubscribe again</Link>
          </p>
        </>
      ) : (
        <>
          <h1>Unsubscribed</h1>
          <p className="mt-3 text-sm" data-testid="unsubscribe-done">
            You will no longer get {MAIL_KIND_WORDS[result.kind]} from {result.facilityName}. Other e-mails
            are not affected; you can change this any time under Settings → E-mail.
          </p>
          <form action={resubscribeAction} className="mt-6">
            <input type="hidden" name="token" value={token} />
            <button type="submit" className="btn-quiet">
              Undo: keep getting them
            </button>
          </form>
        </>
      )}
    </PublicCard>
  );
}
