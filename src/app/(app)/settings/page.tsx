import type { Metadata } from "next";
import { forbidden } from "next/navigation";
import { requirePageActor } from "@/server/auth/current-actor";
import { can } from "@/server/auth/permissions";
import { getDb } from "@/server/db/client";
import { listPeople } from "@/server/services/people";
import { listApiTokens } from "@/server/services/api-tokens";
import { fmtDate } from "@/components/format";
import { TokenForm } from "./_components/token-form";

export const metadata: Metadata = { title: "Settings" };

export default async function SettingsPage() {
  const { actor, facilityName } = await requirePageActor();
  if (!can(actor, "settings.open")) forbidden();
  const db = getDb();
  const [people, tokens] = await Promise.all([
    can(actor, "people.manage") ? listPeople(db, actor) : Promise.resolve([]),
    listApiTokens(db, actor),
  ]);
  return (
    <div className="space-y-6">
      <div>
        <h1>Settings</h1>
        <p className="text-sm text-ink-soft">{facilityName}</p>
      </div>
      {can(actor, "people.manage") ? (
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
                  <td>{p.role}</td>
                  <td className="font-mono">{fmtDate(p.lastSignInAt)}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </section>
      ) : null}
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
            </tr>
          </thead>
          <tbody>
            {tokens.length === 0 ? (
              <tr>
                <td colSpan={5} className="text-ink-soft">
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
