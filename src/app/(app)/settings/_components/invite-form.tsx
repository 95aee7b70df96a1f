"use client";
import { useActionState } from "react";
import type { ActionState } from "@/contracts/action-state";
import { inviteAction, revokeInvitationAction } from "../actions";

const ROLE_OPTIONS = [
  { value: "researcher", label: "researcher — status, logbooks, own sample measurements" },
  { value: "staff", label: "staff — instruments, objectives, routine checks" },
  { value: "engineer", label: "engineer — instruments of their service visits" },
  { value: "admin", label: "admin — everything, including people and tolerances" },
];

export function InviteForm({ outbox }: { outbox: boolean }) {
  const [state, action, pending] = useActionState<ActionState, FormData>(inviteAction, {});
  return (
    <form action={action} className="flex flex-wrap items-end gap-3" data-testid="invite-form">
      <div className="min-w-64 flex-1">
        <label className="label" htmlFor="invite-email">
          E-mail
        </label>
        <input
          id="invite-email"
          name="email"
          type="email"
          required
          maxLength={254}
          className="field"
          placeholder="name@institute.example"
        />
      </div>
      <div>
        <label className="label" htmlFor="invite-role">
          Role
        </label>
        <select id="invite-role" name="role" className="field" defaultValue="researcher">
          {ROLE_OPTIONS.map((r) => (
            <option key={r.value} value={r.value}>
              {r.label}
            </option>
          ))}
        </select>
      </div>
      <button className="btn" disabled={pending}>
        {pending ? "Sending…" : "Send invitation"}
      </button>
      <div className="w-full text-sm" aria-live="polite">
        {state.ok ? (
          <p role="status" className="text-good">
            {outbox
              ? "Invitation saved and written to the outbox file (no mail server is set up)."
              : "Invitation sent."}
          </p>
        ) : null}
        {state.error ? (
          <div role="alert" className="text-bad">
            {state.error}
            {state.fieldErrors ? (
              <ul className="list-disc pl-5">
                {Object.entries(state.fieldErrors).map(([k, v]) => (
                  <li key={k}>
                    {k}: {v}
                  </li>
                ))}
              </ul>
            ) : null}
          </div>
        ) : null}
      </div>
    </form>
  );
}

export function RevokeInvitationButton({ id, email }: { id: string; email: string }) {
  const [state, action, pending] = useActionState<ActionState, FormData>(revokeInvitationAction, {});
  return (
    <form action={action} className="inline">
      <input type="hidden" name="id" value={id} />
      <button className="btn-quiet" disabled={pending} aria-label={`Withdraw the invitation to ${email}`}>
        Withdraw
      </button>
      {state.error ? (
        <span role="alert" className="ml-2 text-sm text-bad">
          {state.error}
        </span>
      ) : null}
    </form>
  );
}
