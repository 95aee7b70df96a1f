"use client";
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

/** Sortable, filterable bead table; rejected beads stay visible with their reason. */
export function BeadTable({ beads }: { beads: PublicBead[]; measurementId: string }) {
  const [sort, setSort] = useState<{ key: Key; dir: 1 | -1 }>({ key: "depth_um", dir: 1 });
  const [show, setShow] = useState<"all" | "included" | "rejected">("all");
  const rows = useMemo(() => {
    const filtered = beads.filter((b) => show === "all" || (show === "included" ? b.included : !b.included));
    return [...filtered].sort((a, b) =>
      ((a[sort.key] ?? Infinity) as number) > ((b[sort.key] ?? Infinity) as number) ? sort.dir : -sort.dir,
    );
  }, [beads, sort, show]);
  return (
    <div>
      <div className="mb-2 flex gap-2 text-sm">
        {(["all", "included", "rejected"] as const).map((s) => (
          <button key={s} className={show === s ? "btn" : "btn-quiet"} onClick={() => setShow(s)}>
            {s} ({beads.filter((b) => s === "all" || (s === "included" ? b.included : !b.included)).length})
          </button>
        ))}
      </div>
      <div className="max-h-96 overflow-auto">
        <table className="data-table" data-testid="bead-table">
          <thead className="sticky top-0 bg-white">
            <tr>
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
              <th>Used</th>
            </tr>
          </thead>
          <tbody>
            {rows.map((b) => (
              <tr key={b.id} className={b.included ? "" : "text-ink-faint"}>
                {COLUMNS.map((c) => (
                  <td key={c.key} className="num">
                    {b[c.key] == null ? "—" : Number(b[c.key]).toFixed(c.digits)}
                  </td>
                ))}
                <td className="text-xs">
                  {b.included ? "yes" : `no: ${b.reject_reason?.replace(/_/g, " ")}`}
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
    </div>
  );
}
