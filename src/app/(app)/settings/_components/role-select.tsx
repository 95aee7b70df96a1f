"use client";
import { useActionState } from "react";
import type { ActionState } from "@/contracts/action-state";
import { changeRoleAction } from "../actions";

const ROLES = ["admin", "staff", "researcher", "engineer"] as const;

/** A member's role, changed in place (admins only; the last admin cannot be demoted). */
export function RoleSelect({ userId, role, self }: { userId: string; role: string; self: boolean }) {
  const [state, action, pending] = useActionState<ActionState, FormData>(changeRoleAction, {});
  return (
    <form action={action} className="flex items-center gap-2">
      <input type="hidden" name="userId" value={userId} />
      <select
        name="role"
        defaultValue={role}
        className="field w-auto py-1"
        aria-label="Role"
        disabled={pending}
        onChange={(e) => {
          if (self && e.target.value !== "admin" && !confirm("Remove your own admin rights?")) {
            e.target.value = role;
            return;
          }
          e.currentTarget.form?.requestSubmit();
        }}
      >
        {ROLES.map((r) => (
          <option key={r} value={r}>
            {r}
          </option>
        ))}
      </select>
      {state.error ? (
        <span role="alert" className="text-xs text-bad">
          {state.error}
        </span>
      ) : state.ok ? (
        <span role="status" className="text-xs text-good">
          saved
        </span>
      ) : null}
    </form>
  );
}
