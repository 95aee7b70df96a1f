"use client";
import { useActionState } from "react";
import { createTokenAction, type TokenState } from "../actions";

export function TokenForm() {
  const [state, action, pending] = useActionState<TokenState, FormData>(createTokenAction, {});
  return (
    <form action={action} className="flex flex-wrap items-end gap-3">
      <div>
        <label className="label" htmlFor="token-name">
          Token name
        </label>
        <input id="token-name" name="name" className="field" placeholder="e.g. confocal room PC" required />
      </div>
      <div>
        <label className="label" htmlFor="token-days">
          Expires after (days)
        </label>
        <input
          id="token-days"
          name="expiresInDays"
          type="number"
          min={1}
          max={730}
          defaultValue={180}
          className="field w-32"
        />
      </div>
      <button className="btn" disabled={pending}>
        Create token
      </button>
      {state.token ? (
        <p className="w-full rounded-md bg-accent-soft/60 p-2 text-sm">
          Copy it now; it will not be shown again: <code className="font-mono break-all">{state.token}</code>
        </p>
      ) : null}
      {state.error ? (
        <p role="alert" className="w-full text-sm text-bad">
          {state.error}
        </p>
      ) : null}
    </form>
  );
}
