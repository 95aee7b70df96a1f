import type { Metadata } from "next";
import Link from "next/link";
import { notFound } from "next/navigation";
import { z } from "zod";
import { requirePageActor } from "@/server/auth/current-actor";
import { can } from "@/server/auth/permissions";
import { getDb } from "@/server/db/client";
import { AppError } from "@/server/http/errors";
import { getStackDetail } from "@/server/services/stacks";
import { fmtDate, fmtNum } from "@/components/format";
import { fmtBytes, fmtDateTime, fmtVoxel, thumbnailUrl } from "../_components/stack-format";
import { DeleteStackButton } from "./_components/delete-stack-button";
import { MetadataTable } from "./_components/metadata-table";

export const metadata: Metadata = { title: "Stack" };

/** Where the voxel size stored with the stack came from (the row's `metadataSource`). */
const VOXEL_SOURCE: Record<string, string> = {
  user: "entered at upload",
  "ome-tiff": "OME-XML in the file",
  imagej: "ImageJ description in the file",
  plain: "TIFF resolution tags",
  none: "not known: enter it when you start a measurement",
};

const SAMPLE_TYPE: Record<string, string> = {
  "bead-slide": "bead slide",
  "beads-in-medium": "beads in the sample medium",
};

const channelSchema = z.coerce.number().int().min(0);

export default async function StackPage({
  params,
  searchParams,
}: {
  params: Promise<{ id: string }>;
  searchParams: Promise<{ channel?: string | string[] }>;
}) {
  const { id } = await params;
  if (!z.uuid().safeParse(id).success) notFound();
  const { actor } = await requirePageActor();
  let s;
  try {
    s = await getStackDetail(getDb(), actor, id);
  } catch (err) {
    if (err instanceof AppError && err.code === "not_found") notFound();
    throw err;
  }
  const requested = channelSchema.safeParse((await searchParams).channel);
  const channel = requested.success && requested.data < s.channels ? requested.data : 0;
  const v = s.voxelSizeUm;
  const hiddenMeasurements = s.measurementCount - s.measurements.length;
  const warnings = s.metadata?.warnings ?? [];

  return (
    <div className="space-y-6">
      <div className="flex flex-wrap items-end gap-4">
        <div className="min-w-0">
          <p className="text-sm">
            <Link href="/stacks">Stacks</Link>
          </p>
          <h1 className="break-all">{s.fileName}</h1>
          <p className="text-sm text-ink-soft">
            Uploaded {fmtDateTime(s.createdAt)} by {s.uploadedByName ?? "a former member"}
          </p>
        </div>
        <div className="ml-auto flex flex-col items-end gap-1">
          <Link href={`/measurements/new?stack=${s.id}`} className="btn" data-testid="measure-stack">
            Measure this stack
          </Link>
        </div>
      </div>

      <div className="grid gap-6 lg:grid-cols-[minmax(0,28rem)_1fr]">
        <section className="card space-y-2">
          <h2>Maximum-intensity projection</h2>
          <img
            src={thumbnailUrl(s.id, 512, channel)}
            alt={`Maximum-intensity projection of ${s.fileName}, channel ${channel}`}
            className="w-full rounded-sm bg-ink object-contain"
            style={{ aspectRatio: `${s.width} / ${s.height}` }}
            data-testid="stack-projection"
          />
          <p className="text-xs text-ink-soft">
            Brightest voxel along z for each pixel, channel {channel} (counted from 0). Contrast stretched
            between the 0.5 % and 99.9 % points; for viewing only.
          </p>
          {s.channels > 1 ? (
            <nav aria-label="Channel" className="flex flex-wrap gap-1 text-sm">
              {Array.from({ length: s.channels }, (_, c) => (
                <Link
                  key={c}
                  href={`/stacks/${s.id}?channel=${c}`}
                  aria-current={c === channel ? "page" : undefined}
                  className={c === channel ? "btn py-0.5" : "btn-quiet py-0.5"}
                >
                  Channel {c}
                </Link>
              ))}
            </nav>
          ) : null}
        </section>

        <section className="card" data-testid="stack-facts">
          <h2 className="mb-3">The stack</h2>
          <dl className="grid gap-x-6 gap-y-3 text-sm sm:grid-cols-2">
            <Fact label="Size" value={`${fmtBytes(s.sizeBytes)} (${s.sizeBytes} bytes)`} />
            <Fact label="Dimensions x × y × z" value={`${s.width} × ${s.height} px × ${s.slices} planes`} />
            <Fact label="Channels · frames" value={`${s.channels} · ${s.frames}`} />
            <Fact label="Sample type" value={s.dtype} />
            <Fact label="Voxel x × y × z (µm)" value={fmtVoxel(v)} />
            <Fact label="Voxel size from" value={VOXEL_SOURCE[s.metadataSource] ?? s.metadataSource} plain />
            <Fact
              label="Field of view x × y (µm)"
              value={v ? `${fmtNum(s.width * v.x, 1)} × ${fmtNum(s.height * v.y, 1)}` : "unknown"}
            />
            <Fact
              label="z range, nominal (µm)"
              value={v ? `${fmtNum((s.slices - 1) * v.z, 2)} (${s.slices - 1} steps)` : "unknown"}
            />
            <Fact
              label="Specimen"
              value={s.sampleType ? (SAMPLE_TYPE[s.sampleType] ?? s.sampleType) : "not stated"}
              plain
            />
            <Fact label="Measurements using it" value={String(s.measurementCount)} />
            <div className="sm:col-span-2">
              <dt className="label">SHA-256</dt>
              <dd className="break-all font-mono text-xs">{s.sha256}</dd>
            </div>
          </dl>
        </section>
      </div>

      <section className="card space-y-3">
        <h2>Metadata read from the file</h2>
        {warnings.length ? (
          <ul className="space-y-1 text-sm" data-testid="stack-warnings">
            {warnings.map((w, i) => (
              <li key={`${w.code}-${i}`} className="rounded-md border border-watch/30 bg-watch/10 px-2 py-1">
                <span className="font-semibold text-watch">Warning · </span>
                {w.message}
              </li>
            ))}
          </ul>
        ) : (
          <p className="text-sm text-ink-soft">The reader raised no warnings for this file.</p>
        )}
        {s.metadata ? (
          <MetadataTable metadata={s.metadata} />
        ) : (
          <p className="text-sm text-ink-soft">No metadata record was stored with this stack.</p>
        )}
      </section>

      <section className="card space-y-3">
        <h2>Measurements using this stack</h2>
        {s.measurements.length === 0 ? (
          <p className="text-sm text-ink-soft">
            {s.measurementCount === 0
              ? "None yet."
              : `${s.measurementCount} measurement(s) use this stack; none of them is open to your role.`}
          </p>
        ) : (
          <table className="data-table" data-testid="stack-measurements">
            <thead>
              <tr>
                <th>Acquired</th>
                <th>Objective</th>
                <th>Purpose</th>
                <th>State</th>
                <th className="num">Channel (from 0)</th>
                <th className="num">Version</th>
                <th>By</th>
              </tr>
            </thead>
            <tbody>
              {s.measurements.map((m) => (
                <tr key={m.id}>
                  <td className="font-mono">
                    <Link href={`/measurements/${m.id}`}>{fmtDate(m.acquiredAt)}</Link>
                  </td>
                  <td>{m.objectiveName}</td>
                  <td>{m.purpose}</td>
                  <td>{m.status}</td>
                  <td className="num">{m.channel}</td>
                  <td className="num">{m.version}</td>
                  <td>{m.createdByName ?? "—"}</td>
                </tr>
              ))}
            </tbody>
          </table>
        )}
        {hiddenMeasurements > 0 && s.measurements.length > 0 ? (
          <p className="text-xs text-ink-soft">
            {hiddenMeasurements} more measurement(s) of this stack are not open to your role.
          </p>
        ) : null}
      </section>

      {can(actor, "stacks.delete") ? (
        <section className="card space-y-2">
          <h2>Delete</h2>
          <p className="text-sm text-ink-soft">
            Deleting removes the stack and its stored file. A stack that a measurement uses is kept, so that
            every result can be traced back to its data.
          </p>
          <DeleteStackButton stackId={s.id} fileName={s.fileName} />
        </section>
      ) : null}
    </div>
  );
}

function Fact({ label, value, plain = false }: { label: string; value: string; plain?: boolean }) {
  return (
    <div>
      <dt className="label">{label}</dt>
      <dd className={plain ? "" : "font-mono"}>{value}</dd>
    </div>
  );
}
