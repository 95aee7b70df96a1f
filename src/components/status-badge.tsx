import type { ObjectiveStatus } from "@/lib/qc";

// Each status has a colour *and* a text label, so it reads without colour vision.
const STYLE: Record<ObjectiveStatus, string> = {
  "in spec": "bg-good/10 text-good border-good/30",
  watch: "bg-watch/10 text-watch border-watch/30",
  "out of spec": "bg-bad/10 text-bad border-bad/30",
  overdue: "bg-bad/5 text-bad border-bad/20 border-dashed",
  "no data": "bg-idle/10 text-idle border-idle/30",
};

export function StatusBadge({ status }: { status: ObjectiveStatus }) {
  return (
    <span
      className={`inline-block whitespace-nowrap rounded-full border px-2 py-0.5 text-xs font-semibold ${STYLE[status]}`}
    >
      {status}
    </span>
  );
}
