"use client";
import { useActionState } from "react";
import { acceptInvitationAction, type AcceptState } from "./actions";

export function AcceptForm({
  token,
  email,
  hasAccount,
}: {
  token: string;
  email: string;
  hasAccount: boolean;
}) {
  const [state, action, pending] = useActionState<AcceptState, FormData>(acceptInvitationAction, {});
  return (
    <form action={action} className="space-y-4" data-testid="accept-invitation-form">
      <input type="hidden" name="token" value={token} />
      <div>
        <label className="label" htmlFor="invite-email">
          E-mail
        </label>
        <input
          id="invite-email"
          type="email"
          value={email}
          readOnly
          autoComplete="username"
          className="field bg-paper"
        />
      </div>
      {hasAccount ? (
        <p className="text-sm text-ink-soft">
          This address already has an account. Accepting adds this facility to it; your name and password stay
          as they are.
        </p>
      ) : (
        <>
          <div>
            <label className="label" htmlFor="invite-name">
              Your name
            </label>
            <input
              id="invite-name"
              name="name"
              required
              maxLength={120}
              autoComplete="name"
              defaultValue={state.name}
              className="field"
            />
          </div>
          <div>
            <label className="label" htmlFor="invite-password">
              Password (at least 12 characters)
            </label>
            <input
              id="invite-password"
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
            <label className="label" htmlFor="invite-confirm">
              Password again
            </label>
            <input
              id="invite-confirm"
              name="confirm"
              type="password"
              required
              autoComplete="new-password"
              className="field"
            />
          </div>
        </>
      )}
      {state.error ? (
        <p
          role="alert"
          data-testid="accept-error"
          className="rounded-md border border-bad/30 bg-bad/5 px-3 py-2 text-sm text-bad"
        >
          {state.error}
        </p>
      ) : null}
      <button type="submit" className="btn w-full justify-center" disabled={pending}>
        {pending ? "Joining…" : hasAccount ? "Accept and join" : "Create account and join"}
      </button>
    </form>
  );
}
