import type { Metadata } from "next";
import Link from "next/link";
import { forbidden } from "next/navigation";
import { requirePageActor } from "@/server/auth/current-actor";
import { can } from "@/server/auth/permissions";
import { getDb } from "@/server/db/client";
import { listPeople } from "@/server/services/people";
import { listApiTokens } from "@/server/services/api-tokens";
import { getMailDelivery, listInvitations } from "@/server/services/invitations";
import { getLastReminder } from "@/server/services/reminders";
import { getMailPreferences, setMailPreferences } from "@/server/services/mail-preferences";
import { revalidatePath } from "next/cache";
import { requireApiActor } from "@/server/auth/current-actor";
import { fmtDate } from "@/components/format";
import { TokenForm } from "./_components/token-form";
import { RoleSelect } from "./_components/role-select";
import { revokeTokenAction } from "./actions";
import { InviteForm, RevokeInvitationButton } from "./_components/invite-form";

export const metadata: Metadata = { title: "Settings" };

/** The signed-in person's own choice of automatic mail from this facility. */
async function saveMailPreferencesAction(form: FormData): Promise<void> {
  "use server";
  const actor = await requireApiActor();
  await setMailPreferences(getDb(), actor, {
    reminders: form.get("reminders") === "on",
    alerts: form.get("alerts") === "on",
    weeklyDigest: form.get("weeklyDigest") === "on",
  });
  revalidatePath("/settings");
}

export default async function SettingsPage() {
  const { actor, facilityName } = await requirePageActor();
  if (!can(actor, "settings.open")) forbidden();
  const db = getDb();
  const managesPeople = can(actor, "people.manage");
  const [people, tokens, invitations, lastReminder, mailPrefs] = await Promise.all([
    managesPeople ? listPeople(db, actor) : Promise.resolve([]),
    listApiTokens(db, actor),
    managesPeople ? listInvitations(db, actor) : Promise.resolve([]),
    getLastReminder(db, actor),
    getMailPreferences(db, actor),
  ]);
  const delivery = getMailDelivery(actor);
  return (
    <div className="space-y-6">
      <div>
        <h1>Settings</h1>
        <p className="text-sm text-ink-soft">{facilityName}</p>
        {managesPeople ? (
          <p className="mt-2 flex gap-4 text-sm" data-testid="settings-admin-links">
            <Link href="/settings/audit">Audit log</Link>
            <Link href="/settings/mail">Captured mail (development)</Link>
          </p>
        ) : null}
      </div>
      {managesPeople ? (
        <section className="card">
          <h2 className="mb-3">People and roles</h2>
          <table className="data-table">
            <thead>
              <tr>
                <th>Name</th>
                <th>E-mail</th>
                <th>Role</th>
                <th>Last sign-in</th>
              </tr>
            </thead>
            <tbody>
              {people.map((p) => (
                <tr key={p.userId}>
                  <td>{p.name}</td>
                  <td>{p.email}</td>
                  <td>
                    <RoleSelect userId={p.userId} role={p.role} self={p.userId === actor.userId} />
                  </td>
                  <td className="font-mono">{fmtDate(p.lastSignInAt)}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </section>
      ) : null}
      {delivery.mode === "outbox" ? (
        <p
          role="note"
          className="rounded-md border border-paper-line bg-accent-soft/40 px-3 py-2 text-sm"
          data-testid="mail-outbox-notice"
        >
          No mail server is set up (<code className="font-mono">SMTP_URL</code>): invitations and reminders
          are not sent but written to <code className="font-mono break-all">{delivery.path}</code> on the
          server.
        </p>
      ) : null}
      {managesPeople ? (
        <section className="card" aria-labelledby="invite-heading">
          <h2 id="invite-heading" className="mb-1">
            Invite someone
          </h2>
          <p className="mb-3 text-sm text-ink-soft">
            We e-mail a link that works once, for 7 days. Inviting the same address again replaces the earlier
            link. Someone who already has an account elsewhere keeps their password and gets this facility
            added.
          </p>
          <InviteForm outbox={delivery.mode === "outbox"} />
          <h3 className="mb-2 mt-5 text-sm font-semibold">Pending invitations</h3>
          <table className="data-table">
            <thead>
              <tr>
                <th>E-mail</th>
                <th>Role</th>
                <th>Invited by</th>
                <th>Sent</th>
                <th>Link valid until</th>
                <th>
                  <span className="sr-only">Actions</span>
                </th>
              </tr>
            </thead>
            <tbody>
              {invitations.length === 0 ? (
                <tr>
                  <td colSpan={6} className="text-ink-soft">
                    No pending invitations.
                  </td>
                </tr>
              ) : (
                invitations.map((i) => (
                  <tr key={i.id}>
                    <td>{i.email}</td>
                    <td>{i.role}</td>
                    <td>{i.invitedByName ?? "—"}</td>
                    <td className="font-mono">{fmtDate(i.createdAt)}</td>
                    <td className="font-mono">
                      {fmtDate(i.expiresAt)}
                      {i.expired ? <span className="ml-2 font-sans text-bad">expired</span> : null}
                    </td>
                    <td className="text-right">
                      <RevokeInvitationButton id={i.id} email={i.email} />
                    </td>
                  </tr>
                ))
              )}
            </tbody>
          </table>
        </section>
      ) : null}
      <section className="card" aria-labelledby="reminders-heading">
        <h2 id="reminders-heading" className="mb-1">
          Reminders
        </h2>
        <p className="text-sm text-ink-soft">
          Every day at 07:00 UTC, admins and staff get one e-mail listing the bead checks that are overdue,
          due within 7 days, or never recorded — only when there is something to plan, and at most once a day.
          The interval is set per objective.
        </p>
        <p className="mt-2 text-sm">
          {lastReminder ? (
            <>
              Last digest: <span className="font-mono">{fmtDate(lastReminder.sentAt)}</span>
              {lastReminder.recipients != null ? ` to ${lastReminder.recipients} people` : ""}
              {lastReminder.delivery === "outbox" ? " (written to the outbox file)" : ""}.
            </>
          ) : (
            "No digest has been sent to this facility yet."
          )}
        </p>
      </section>
      <section className="card" aria-labelledby="email-heading">
        <h2 id="email-heading" className="mb-1">
          E-mail
        </h2>
        <p className="mb-3 text-sm text-ink-soft">
          Which automatic e-mails you get from this facility. Each of them also has a one-click unsubscribe
          link.
        </p>
        <form action={saveMailPreferencesAction} className="space-y-2" data-testid="mail-preferences-form">
          <label className="flex items-center gap-2 text-sm">
            <input type="checkbox" name="reminders" defaultChecked={mailPrefs.reminders} /> Daily reminders of
            checks to plan
          </label>
          <label className="flex items-center gap-2 text-sm">
            <input type="checkbox" name="alerts" defaultChecked={mailPrefs.alerts} /> Alerts when a check is
            out of spec
          </label>
          <label className="flex items-center gap-2 text-sm">
            <input type="checkbox" name="weeklyDigest" defaultChecked={mailPrefs.weeklyDigest} /> Weekly
            summary on Mondays (admins only)
          </label>
          <button type="submit" className="btn">
            Save e-mail choices
          </button>
        </form>
      </section>
      <section className="card">
        <h2 className="mb-1">API tokens</h2>
        <p className="mb-3 text-sm text-ink-soft">
          For scripts on acquisition PCs: send{" "}
          <code className="font-mono">Authorization: Bearer &lt;token&gt;</code>. A token is shown once; only
          its hash is kept.
        </p>
        <table className="data-table mb-4">
          <thead>
            <tr>
              <th>Name</th>
              <th>Starts with</th>
              <th>Created</th>
              <th>Last used</th>
              <th>Expires</th>
              <th></th>
            </tr>
          </thead>
          <tbody>
            {tokens.length === 0 ? (
              <tr>
                <td colSpan={6} className="text-ink-soft">
                  No tokens yet.
                </td>
              </tr>
            ) : (
              tokens.map((t) => (
                <tr key={t.id}>
                  <td>{t.name}</td>
                  <td className="font-mono">{t.prefix}…</td>
                  <td className="font-mono">{fmtDate(t.createdAt)}</td>
                  <td className="font-mono">{fmtDate(t.lastUsedAt)}</td>
                  <td className="font-mono">{fmtDate(t.expiresAt)}</td>
                  <td>
                    <form action={revokeTokenAction}>
                      <input type="hidden" name="tokenId" value={t.id} />
                      <button className="btn-quiet py-0.5 text-xs">Revoke</button>
                    </form>
                  </td>
                </tr>
              ))
            )}
          </tbody>
        </table>
        <TokenForm />
      </section>
    </div>
  );
}
