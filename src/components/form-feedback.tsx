import type { ActionState } from "@/contracts/action-state";

export function FormFeedback({ state }: { state: ActionState }) {
  if (state.ok)
    return (
      <p className="text-sm text-good" role="status">
        Saved.
      </p>
    );
  if (!state.error) return null;
  return (
    <div role="alert" className="text-sm text-bad">
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
  );
}
