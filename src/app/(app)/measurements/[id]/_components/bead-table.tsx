"use client";
import { useRouter } from "next/navigation";
import { useMemo, useState } from "react";
import type { PublicBead } from "@/hooks/use-measurement";

type Key =
  | "id"
  | "depth_um"
  | "fwhm_x_um"
  | "fwhm_y_um"
  | "fwhm_z_um"
  | "fwhm_z_direct_um"
  | "snr"
  | "r2"
  | "axial_asymmetry";

const COLUMNS: Array<{ key: Key; label: string; digits: number }> = [
  { key: "id", label: "Bead", digits: 0 },
  { key: "depth_um", label: "Depth (µm)", digits: 2 },
  { key: "fwhm_x_um", label: "FWHM x (µm)", digits: 3 },
  { key: "fwhm_y_um", label: "FWHM y (µm)", digits: 3 },
  { key: "fwhm_z_um", label: "FWHM z (µm)", digits: 3 },
  { key: "fwhm_z_direct_um", label: "z half-max (µm)", digits: 3 },
  { key: "snr", label: "SNR", digits: 1 },
  { key: "r2", label: "R²", digits: 3 },
  { key: "axial_asymmetry", label: "Axial asym.", digits: 3 },
];

/**
 * Sortable, filterable bead table; rejected beads stay visible with their reason.
 * Unticking beads and re-running makes a new version without them (the old one is kept).
 */
export function BeadTable({
  beads,
  measurementId,
  onSelect,
  selectedId,
}: {
  beads: PublicBead[];
  measurementId: string;
  onSelect?: (id: number) => void;
  selectedId?: number | null;
}) {
  const router = useRouter();
  const [sort, setSort] = useState<{ key: Key; dir: 1 | -1 }>({ key: "depth_um", dir: 1 });
  const [show, setShow] = useState<"all" | "included" | "rejected">("all");
  const [excluded, setExcluded] = useState<Set<number>>(new Set());
  const [busy, setBusy] = useState(false);
  const [error, setError] = useState<string | null>(null);
  const rows = useMemo(() => {
    const filtered = beads.filter((b) => show === "all" || (show === "included" ? b.included : !b.included));
    return [...filtered].sort((a, b) =>
      ((a[sort.key] ?? Infinity) as number) > ((b[sort.key] ?? Infinity) as number) ? sort.dir : -sort.dir,
    );
  }, [beads, sort, show]);

  async function rerun() {
    setBusy(true);
    setError(null);
    const res = await fetch(`/api/v1/measurements/${measurementId}/rerun`, {
      method: "POST",
      headers: { "Content-Type": "application/json" },
      body: JSON.stringify({ excludedBeadIds: [...excluded] }),
    });
    const j = await res.json().catch(() => null);
    setBusy(false);
    if (!res.ok || !j?.id) {
      setError(j?.error?.message ?? `HTTP ${res.status}`);
      return;
    }
    router.push(`/measurements/${j.id}`);
  }

  return (
    <div>
      <div className="mb-2 flex flex-wrap items-center gap-2 text-sm">
        {(["all", "included", "rejected"] as const).map((s) => (
          <button key={s} className={show === s ? "btn" : "btn-quiet"} onClick={() => setShow(s)}>
            {s} ({beads.filter((b) => s === "all" || (s === "included" ? b.included : !b.included)).length})
          </button>
        ))}
        {excluded.size > 0 ? (
          <button className="btn ml-auto" onClick={rerun} disabled={busy} data-testid="rerun-excluding">
            Re-run without {excluded.size} bead{excluded.size > 1 ? "s" : ""} (new version)
          </button>
        ) : null}
        {error ? (
          <span role="alert" className="text-bad">
            {error}
          </span>
        ) : null}
      </div>
      <div className="max-h-96 overflow-auto">
        <table className="data-table" data-testid="bead-table">
          <thead className="sticky top-0 bg-white">
            <tr>
              <th>Use</th>
              {COLUMNS.map((c) => (
                <th
                  key={c.key}
                  className="num cursor-pointer select-none"
                  onClick={() =>
                    setSort((s) => ({ key: c.key, dir: s.key === c.key ? (-s.dir as 1 | -1) : 1 }))
                  }
                >
                  {c.label}
                  {sort.key === c.key ? (sort.dir === 1 ? " ▲" : " ▼") : ""}
                </th>
              ))}
              <th>Status</th>
            </tr>
          </thead>
          <tbody>
            {rows.map((b) => (
              <tr
                key={b.id}
                className={`${b.included ? "" : "text-ink-faint"} ${selectedId === b.id ? "bg-accent-soft/40" : ""} ${onSelect ? "cursor-pointer" : ""}`}
                onClick={() => onSelect?.(b.id)}
              >
                <td onClick={(e) => e.stopPropagation()}>
                  <input
                    type="checkbox"
                    aria-label={`use bead ${b.id}`}
                    disabled={!b.included}
                    checked={b.included && !excluded.has(b.id)}
                    onChange={(e) =>
                      setExcluded((s) => {
                        const n = new Set(s);
                        if (e.target.checked) n.delete(b.id);
                        else n.add(b.id);
                        return n;
                      })
                    }
                  />
                </td>
                {COLUMNS.map((c) => (
                  <td key={c.key} className="num">
                    {b[c.key] == null ? "—" : Number(b[c.key]).toFixed(c.digits)}
                  </td>
                ))}
                <td className="text-xs">
                  {b.included ? "used" : `rejected: ${b.reject_reason?.replace(/_/g, " ")}`}
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
    </div>
  );
}
