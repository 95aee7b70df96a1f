import Link from "next/link";
import { fmtDate } from "./format";

export interface MeasurementListItem {
  id: string;
  acquiredAt: Date | string;
  purpose: string;
  status: string;
  objectiveName?: string;
  fileName?: string;
  createdByName: string | null;
}

/** A compact table of measurements, newest first; `show` picks the identifying column. */
export function MeasurementList({
  items,
  show,
}: {
  items: MeasurementListItem[];
  show: "objective" | "stack";
}) {
  return (
    <table className="data-table">
      <thead>
        <tr>
          <th>Acquired</th>
          {show === "objective" ? <th>Objective</th> : null}
          <th>Purpose</th>
          <th>State</th>
          {show === "stack" ? <th>Stack</th> : null}
          <th>By</th>
        </tr>
      </thead>
      <tbody>
        {items.map((m) => (
          <tr key={m.id}>
            <td className="whitespace-nowrap font-mono">
              <Link href={`/measurements/${m.id}`}>{fmtDate(m.acquiredAt)}</Link>
            </td>
            {show === "objective" ? <td>{m.objectiveName}</td> : null}
            <td>{m.purpose}</td>
            <td>{m.status}</td>
            {show === "stack" ? <td>{m.fileName}</td> : null}
            <td>{m.createdByName ?? "—"}</td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}
