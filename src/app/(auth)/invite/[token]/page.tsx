import type { Metadata } from "next";
import Link from "next/link";
import { getDb } from "@/server/db/client";
import { AppError } from "@/server/http/errors";
import { getInvitation } from "@/server/services/invitations";
import type { InvitationPreview } from "@/contracts/invitations";
import { AcceptForm } from "./accept-form";
import { PublicCard } from "@/components/public-card";

export const metadata: Metadata = { title: "Invitation", referrer: "no-referrer" };

const ROLE_WORDS: Record<string, string> = {
  admin: "an admin",
  staff: "facility staff",
  researcher: "a researcher",
  engineer: "a service engineer",
};

export default async function InvitePage({ params }: { params: Promise<{ token: string }> }) {
  const { token } = await params;
  let invitation: InvitationPreview | null = null;
  let problem: string | null = null;
  try {
    invitation = await getInvitation(getDb(), token);
  } catch (err) {
    if (!(err instanceof AppError)) throw err;
    problem =
      err.code === "not_found"
        ? "This invitation link is not valid. It may have been replaced by a newer invitation or withdrawn; ask your facility admin to send a new one."
        : err.message;
  }
  return (
    <PublicCard>
      {invitation ? (
        <>
          <h1>Join {invitation.facilityName}</h1>
          <p className="mb-6 mt-1 text-sm text-ink-soft">
            You have been invited as {ROLE_WORDS[invitation.role] ?? invitation.role}. The link works until{" "}
            <span className="font-mono">{invitation.expiresAt.toISOString().slice(0, 10)}</span>.
          </p>
          <AcceptForm token={token} email={invitation.email} hasAccount={invitation.hasAccount} />
        </>
      ) : (
        <>
          <h1>Invitation not usable</h1>
          <p role="alert" className="mt-3 text-sm">
            {problem}
          </p>
          <p className="mt-6 text-sm">
            <Link href="/sign-in">Go to sign-in</Link>
          </p>
        </>
      )}
    </PublicCard>
  );
}
