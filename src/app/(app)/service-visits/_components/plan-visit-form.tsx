"use client";
import { useRouter } from "next/navigation";
import { useState } from "react";

export function PlanVisitForm({
  engineers,
  instruments,
}: {
  engineers: Array<{ id: string; name: string }>;
  instruments: Array<{ id: string; name: string }>;
}) {
  const router = useRouter();
  const [error, setError] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);
  async function submit(e: React.FormEvent<HTMLFormElement>) {
    e.preventDefault();
    const form = e.currentTarget;
    const f = new FormData(form);
    setBusy(true);
    setError(null);
    const res = await fetch("/api/v1/service-visits", {
      method: "POST",
      headers: { "Content-Type": "application/json" },
      body: JSON.stringify({
        title: f.get("title"),
        engineerId: f.get("engineerId") || undefined,
        engineerEmail: String(f.get("engineerEmail") ?? "").trim() || undefined,
        instrumentIds: f.getAll("instrumentIds"),
        startsAt: f.get("startsAt"),
        endsAt: f.get("endsAt"),
      }),
    });
    setBusy(false);
    if (!res.ok) {
      const j = await res.json().catch(() => null);
      setError(j?.error?.message ?? `HTTP ${res.status}`);
      return;
    }
    const created = await res.json().catch(() => null);
    if (created?.engineerNotice === "mail_failed")
      setError(
        "The visit is planned, but the e-mail to the engineer could not be sent. Check the mail settings and invite them again under Settings.",
      );
    form.reset();
    router.refresh();
  }
  const today = new Date().toISOString().slice(0, 10);
  return (
    <form onSubmit={submit} className="grid gap-3 md:grid-cols-4">
      <div className="md:col-span-2">
        <label className="label" htmlFor="v-title">
          Visit
        </label>
        <input
          id="v-title"
          name="title"
          className="field"
          required
          placeholder="e.g. Annual maintenance, confocal"
        />
      </div>
      <div>
        <label className="label" htmlFor="v-eng">
          Engineer
        </label>
        <select id="v-eng" name="engineerId" className="field">
          <option value="">(not yet known)</option>
          {engineers.map((e) => (
            <option key={e.id} value={e.id}>
              {e.name}
            </option>
          ))}
        </select>
      </div>
      <div>
        <label className="label" htmlFor="v-eng-email">
          …or a new engineer&apos;s e-mail
        </label>
        <input
          id="v-eng-email"
          name="engineerEmail"
          type="email"
          className="field"
          autoComplete="off"
          placeholder="engineer@service.example"
        />
        <p className="mt-1 text-xs text-ink-soft">
          Not yet a member: we send an invitation (admins only) and attach them when they accept. Already a
          member: we e-mail them the visit.
        </p>
      </div>
      <div className="row-span-2">
        <span className="label">Instruments</span>
        {instruments.map((i) => (
          <label key={i.id} className="flex items-center gap-2 text-sm">
            <input type="checkbox" name="instrumentIds" value={i.id} /> {i.name}
          </label>
        ))}
      </div>
      <div>
        <label className="label" htmlFor="v-from">
          From
        </label>
        <input id="v-from" name="startsAt" type="date" defaultValue={today} className="field" required />
      </div>
      <div>
        <label className="label" htmlFor="v-to">
          To
        </label>
        <input id="v-to" name="endsAt" type="date" defaultValue={today} className="field" required />
      </div>
      <div className="flex items-end">
        <button className="btn" disabled={busy}>
          Plan the visit
        </button>
      </div>
      {error ? (
        <p role="alert" className="text-sm text-bad md:col-span-4">
          {error}
        </p>
      ) : null}
      <p className="text-xs text-ink-soft md:col-span-4">
        During the visit window the engineer sees only these instruments and can record as-found (pre-service)
        and as-left (post-service) measurements; the visit page compares them with each objective&apos;s
        baseline.
      </p>
    </form>
  );
}
