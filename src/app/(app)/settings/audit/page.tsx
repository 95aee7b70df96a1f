import type { Metadata } from "next";
import Link from "next/link";
import { forbidden } from "next/navigation";
import { requirePageActor } from "@/server/auth/current-actor";
import { can } from "@/server/auth/permissions";
import { getDb } from "@/server/db/client";
import { auditQuerySchema, listAuditLog, type AuditPage } from "@/server/services/audit";
import { cutText } from "@/lib/text/cut-text";

export const metadata: Metadata = { title: "Audit log" };

function compact(value: unknown): string {
  if (value === undefined) return "—";
  const s = JSON.stringify(value);
  if (s.length <= 120) return s;
  // Never inside a surrogate pair (an emoji): a lone half is written as U+FFFD in the HTML but
  // kept in the page data, and React's hydration then fails on the text.
  return `${cutText(s, 117)}…`;
}

/** `{ before, after }` details as "field: old → new" lines; anything else as compact JSON. */
function Details({ details }: { details: unknown }) {
  if (details == null) return <span className="text-ink-soft">—</span>;
  const d = details as { before?: Record<string, unknown>; after?: Record<string, unknown> };
  if (d.before && d.after && typeof d.before === "object" && typeof d.after === "object") {
    const keys = [...new Set([...Object.keys(d.before), ...Object.keys(d.after)])];
    if (keys.length === 0) return <span className="text-ink-soft">no change</span>;
    return (
      <ul className="space-y-0.5">
        {keys.map((k) => (
          <li key={k} className="font-mono text-xs">
            {k}: {compact(d.before![k])} → {compact(d.after![k])}
          </li>
        ))}
      </ul>
    );
  }
  return <code className="font-mono text-xs break-all">{compact(details)}</code>;
}

function pageHref(action: string | null, page: number): string {
  const q = new URLSearchParams();
  if (action) q.set("action", action);
  if (page > 1) q.set("page", String(page));
  const s = q.toString();
  return `/settings/audit${s ? `?${s}` : ""}`;
}

export default async function AuditLogPage({
  searchParams,
}: {
  searchParams: Promise<{ action?: string; page?: string }>;
}) {
  const { actor, facilityName } = await requirePageActor();
  if (!can(actor, "people.manage")) forbidden();
  const { action, page } = await searchParams;
  // A malformed filter in the address: say so and show everything instead of failing the page.
  const valid = auditQuerySchema.safeParse({ action, page });
  const data: AuditPage = await listAuditLog(getDb(), actor, valid.success ? { action, page } : {});
  const problem = valid.success
    ? null
    : "That filter is not valid: use the start of an action name, like objective. or measurement.";
  return (
    <div className="space-y-6">
      <div>
        <p className="text-sm">
          <Link href="/settings">Settings</Link>
        </p>
        <h1>Audit log</h1>
        <p className="text-sm text-ink-soft">
          {facilityName}: every recorded change, newest first. Edits show the changed fields from their old to
          their new value.
        </p>
      </div>
      <form method="get" className="card flex flex-wrap items-end gap-3" data-testid="audit-filter">
        <div>
          <label className="label" htmlFor="audit-action">
            Action starts with
          </label>
          <input
            id="audit-action"
            name="action"
            list="audit-actions"
            defaultValue={problem ? "" : (data.actionPrefix ?? "")}
            placeholder="e.g. objective."
            maxLength={60}
            className="field w-64"
          />
          <datalist id="audit-actions">
            {[...new Set(data.actions.map((a) => `${a.split(".")[0]}.`))].map((p) => (
              <option key={p} value={p} />
            ))}
            {data.actions.map((a) => (
              <option key={a} value={a} />
            ))}
          </datalist>
        </div>
        <button type="submit" className="btn">
          Filter
        </button>
        {data.actionPrefix ? (
          <Link href="/settings/audit" className="btn-quiet">
            Show all
          </Link>
        ) : null}
      </form>
      {problem ? (
        <p role="alert" className="text-sm text-bad">
          {problem}
        </p>
      ) : null}
      <section className="card">
        <table className="data-table" data-testid="audit-table">
          <thead>
            <tr>
              <th>When (UTC)</th>
              <th>Who</th>
              <th>Action</th>
              <th>Target</th>
              <th>Details</th>
            </tr>
          </thead>
          <tbody>
            {data.entries.length === 0 ? (
              <tr>
                <td colSpan={5} className="text-ink-soft">
                  {data.actionPrefix ? "No entries match this filter." : "Nothing recorded yet."}
                </td>
              </tr>
            ) : (
              data.entries.map((e) => (
                <tr key={e.id}>
                  <td className="font-mono whitespace-nowrap">
                    {e.at.toISOString().slice(0, 19).replace("T", " ")}
                  </td>
                  <td>{e.userName ?? <span className="text-ink-soft">system</span>}</td>
                  <td className="font-mono">{e.action}</td>
                  <td className="font-mono text-xs">
                    {e.targetType ? (
                      <>
                        {e.targetType}
                        {e.targetId ? <span className="text-ink-soft"> {e.targetId.slice(0, 8)}</span> : null}
                      </>
                    ) : (
                      "—"
                    )}
                  </td>
                  <td>
                    <Details details={e.details} />
                  </td>
                </tr>
              ))
            )}
          </tbody>
        </table>
        <nav className="mt-4 flex items-center gap-3 text-sm" aria-label="Pages">
          {data.page > 1 ? (
            <Link className="btn-quiet" href={pageHref(data.actionPrefix, data.page - 1)}>
              ← Newer
            </Link>
          ) : null}
          <span className="text-ink-soft">
            Page {data.page} · {data.pageSize} per page
          </span>
          {data.hasNext ? (
            <Link className="btn-quiet" href={pageHref(data.actionPrefix, data.page + 1)}>
              Older →
            </Link>
          ) : null}
        </nav>
      </section>
    </div>
  );
}
