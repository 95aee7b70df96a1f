import type { Metadata } from "next";
import Link from "next/link";
import { requirePageActor } from "@/server/auth/current-actor";
import { getDb } from "@/server/db/client";
import { listStacksWithUsage } from "@/server/services/stacks";
import { fmtBytes, fmtDateTime, fmtVoxel, thumbnailUrl } from "./_components/stack-format";

export const metadata: Metadata = { title: "Stacks" };

export default async function StacksPage() {
  const { actor } = await requirePageActor();
  const stacks = await listStacksWithUsage(getDb(), actor);
  return (
    <div className="space-y-6">
      <div className="flex flex-wrap items-end gap-4">
        <div>
          <h1>Stacks</h1>
          <p className="text-sm text-ink-soft">
            {actor.role === "researcher"
              ? "The bead z-stacks you uploaded, newest first."
              : "Every bead z-stack uploaded to this facility, newest first."}{" "}
            Thumbnails are maximum-intensity projections of the first channel.
          </p>
        </div>
        <Link href="/measurements/new" className="btn ml-auto">
          Upload and measure
        </Link>
      </div>
      <section className="card overflow-x-auto">
        {stacks.length === 0 ? (
          <p className="text-sm text-ink-soft" data-testid="stacks-empty">
            No stacks yet. A stack appears here once it has been uploaded from the new-measurement page or
            through the API.
          </p>
        ) : (
          <table className="data-table" data-testid="stack-table">
            <thead>
              <tr>
                <th>
                  <span className="sr-only">Projection</span>
                </th>
                <th>File</th>
                <th>Uploaded by</th>
                <th>Uploaded</th>
                <th className="num">Size</th>
                <th className="num">x × y × z (px, px, planes)</th>
                <th className="num">Channels</th>
                <th>Type</th>
                <th className="num">Voxel x × y × z (µm)</th>
                <th className="num">Measurements</th>
              </tr>
            </thead>
            <tbody>
              {stacks.map((s) => (
                <tr key={s.id}>
                  <td className="w-14">
                    <img
                      src={thumbnailUrl(s.id, 96)}
                      alt={`Projection of ${s.fileName}`}
                      loading="lazy"
                      decoding="async"
                      width={48}
                      height={48}
                      className="h-12 w-12 rounded-sm bg-ink object-contain"
                      data-testid="stack-thumbnail"
                    />
                  </td>
                  <td className="max-w-72 break-all">
                    <Link href={`/stacks/${s.id}`}>{s.fileName}</Link>
                  </td>
                  <td>{s.uploadedByName ?? "—"}</td>
                  <td className="whitespace-nowrap font-mono text-xs" title={s.createdAt}>
                    {fmtDateTime(s.createdAt)}
                  </td>
                  <td className="num whitespace-nowrap" title={`${s.sizeBytes} bytes`}>
                    {fmtBytes(s.sizeBytes)}
                  </td>
                  <td className="num whitespace-nowrap">
                    {s.width} × {s.height} × {s.slices}
                  </td>
                  <td className="num">{s.channels}</td>
                  <td className="font-mono text-xs">{s.dtype}</td>
                  <td className="num whitespace-nowrap">{fmtVoxel(s.voxelSizeUm)}</td>
                  <td className="num">{s.measurementCount}</td>
                </tr>
              ))}
            </tbody>
          </table>
        )}
        {stacks.length === 200 ? (
          <p className="mt-2 text-xs text-ink-soft">Showing the 200 most recent stacks.</p>
        ) : null}
      </section>
    </div>
  );
}
