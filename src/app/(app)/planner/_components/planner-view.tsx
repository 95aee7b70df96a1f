"use client";
import Link from "next/link";
import { usePathname, useRouter, useSearchParams } from "next/navigation";
import { useEffect, useMemo, useRef } from "react";
import { useQuery } from "@tanstack/react-query";
import type { PlannerResponse } from "@/contracts/planner";
import { Plot, axis, baseLayout, plotConfig, plotText } from "@/components/charts/plot";

const PALETTE = ["#0f766e", "#7c3aed", "#b7791f", "#b42318", "#2563eb", "#4b5563"];

interface Props {
  objectives: Array<{ id: string; name: string; instrument: string | null }>;
  media: Array<{ id: string; name: string; ri: number }>;
}

export function PlannerView({ objectives, media }: Props) {
  const params = useSearchParams();
  const router = useRouter();
  const pathname = usePathname();
  const selected = params.get("objectives")?.split(",").filter(Boolean) ?? objectives.map((o) => o.id);
  const medium = params.get("medium") ?? "water";
  const customRi = params.get("ri") ?? "";
  const emission = Number(params.get("em") ?? 520);
  const maxDepth = Number(params.get("depth") ?? 50);
  const modality = params.get("modality") ?? "widefield";
  const temperature = Number(params.get("t") ?? 23);

  // Two quick edits (e.g. medium, then depth) happen before the router has re-rendered
  // with the first: build each on the newest query we asked for, not on the rendered one.
  const pending = useRef<string | null>(null);
  useEffect(() => {
    if (pending.current === params.toString()) pending.current = null;
  }, [params]);
  function set(next: Record<string, string>) {
    const q = new URLSearchParams(pending.current ?? params.toString());
    for (const [k, v] of Object.entries(next)) q.set(k, v);
    pending.current = q.toString();
    router.replace(`${pathname}?${q.toString()}`, { scroll: false });
  }

  const body = useMemo(() => {
    const depthsUm = Array.from({ length: 21 }, (_, i) => (maxDepth * i) / 20);
    return {
      objectiveIds: selected,
      ...(medium === "custom" ? { sampleRi: Number(customRi) } : { mediumId: medium }),
      temperatureC: temperature,
      emissionWavelengthNm: emission,
      excitationWavelengthNm: modality === "widefield" ? undefined : Math.max(350, emission - 30),
      modality,
      pinholeAu: modality === "confocal" || modality === "spinning-disk" ? 1 : undefined,
      depthsUm,
    };
  }, [selected, medium, customRi, emission, maxDepth, modality, temperature]);

  const ready =
    selected.length > 0 && (medium !== "custom" || (Number(customRi) >= 1 && Number(customRi) <= 2));
  const { data, error, isFetching } = useQuery({
    queryKey: ["planner", body],
    enabled: ready,
    queryFn: async () => {
      const res = await fetch("/api/v1/planner", {
        method: "POST",
        headers: { "Content-Type": "application/json" },
        body: JSON.stringify(body),
      });
      const json = await res.json();
      if (!res.ok) throw new Error(json?.error?.message ?? `HTTP ${res.status}`);
      return json as PlannerResponse;
    },
  });

  const series = (key: "lateralFwhmUm" | "axialFwhmUm" | "peakRelative") =>
    (data?.predictions ?? []).map((p, i) => ({
      name: plotText(p.objective.name),
      x: p.rows.map((r) => r.actualDepthUm),
      y: p.rows.map((r) => r[key]),
      mode: "lines",
      type: "scatter",
      line: { color: PALETTE[i % PALETTE.length], width: 2 },
    }));

  return (
    <div className="space-y-6">
      <section className="card grid gap-3 md:grid-cols-6" data-testid="planner-inputs">
        <div className="md:col-span-2">
          <label className="label">Objectives</label>
          <div className="max-h-36 space-y-1 overflow-auto text-sm">
            {objectives.map((o) => (
              <label key={o.id} className="flex items-center gap-2">
                <input
                  type="checkbox"
                  checked={selected.includes(o.id)}
                  onChange={(e) =>
                    set({
                      objectives: (e.target.checked
                        ? [...selected, o.id]
                        : selected.filter((s) => s !== o.id)
                      ).join(","),
                    })
                  }
                />
                {o.name}
                {o.instrument ? <span className="text-xs text-ink-faint">{o.instrument}</span> : null}
              </label>
            ))}
          </div>
        </div>
        <div className="md:col-span-2">
          <label className="label" htmlFor="p-medium">
            Mounting medium
          </label>
          <select
            id="p-medium"
            className="field"
            value={medium}
            onChange={(e) => set({ medium: e.target.value })}
          >
            {media.map((m) => (
              <option key={m.id} value={m.id}>
                {m.name} (n ≈ {m.ri.toFixed(3)})
              </option>
            ))}
            <option value="custom">Other: enter the RI</option>
          </select>
          {medium === "custom" ? (
            <input
              className="field mt-1"
              type="number"
              step="0.001"
              placeholder="RI, e.g. 1.42"
              value={customRi}
              onChange={(e) => set({ ri: e.target.value })}
            />
          ) : null}
        </div>
        <div>
          <label className="label" htmlFor="p-em">
            Emission λ (nm)
          </label>
          <input
            id="p-em"
            className="field"
            type="number"
            value={emission}
            onChange={(e) => set({ em: e.target.value })}
          />
          <label className="label mt-2" htmlFor="p-t">
            Temperature (°C)
          </label>
          <input
            id="p-t"
            className="field"
            type="number"
            value={temperature}
            onChange={(e) => set({ t: e.target.value })}
          />
        </div>
        <div>
          <label className="label" htmlFor="p-mod">
            Modality
          </label>
          <select
            id="p-mod"
            className="field"
            value={modality}
            onChange={(e) => set({ modality: e.target.value })}
          >
            <option value="widefield">widefield</option>
            <option value="confocal">confocal, 1 AU</option>
            <option value="spinning-disk">spinning disk</option>
          </select>
          <label className="label mt-2" htmlFor="p-depth">
            Deepest plane (µm)
          </label>
          <input
            id="p-depth"
            className="field"
            type="number"
            min={1}
            max={500}
            value={maxDepth}
            onChange={(e) => set({ depth: e.target.value })}
          />
        </div>
      </section>

      {error ? (
        <p role="alert" className="text-sm text-bad">
          {(error as Error).message}
        </p>
      ) : null}
      {isFetching && !data ? <p className="text-sm text-ink-soft">Computing the model…</p> : null}
      {data ? (
        <>
          <section className="card" data-testid="planner-ranking">
            <h2 className="mb-2">
              Best objectives for {data.mediumName} (n = {data.sampleRi.toFixed(3)}) to {maxDepth} µm
            </h2>
            <ol className="space-y-1 text-sm">
              {data.ranking.map((r) => {
                const p = data.predictions.find((x) => x.objective.name === r.objective.name);
                return (
                  <li
                    key={r.objective.name}
                    className="flex gap-3"
                    data-testid="planner-rank-item"
                    data-objective-id={r.objective.id ?? ""}
                  >
                    <span className="font-mono font-semibold">{r.rank}.</span>
                    <span className="min-w-48 font-semibold" data-testid="planner-rank-name">
                      {r.objective.name}
                    </span>
                    <span className="text-ink-soft">{r.reason}</span>
                    <span className="ml-auto whitespace-nowrap font-mono text-xs">
                      axial +25 % at{" "}
                      {p?.depthAt25PctAxialUm != null
                        ? `${p.depthAt25PctAxialUm.toFixed(1)} µm`
                        : `> ${maxDepth} µm`}
                    </span>
                  </li>
                );
              })}
            </ol>
            <p className="mt-3 text-sm">
              Ready to check it?{" "}
              <Link
                href={`/measurements/new?${new URLSearchParams({
                  purpose: "sample",
                  em: String(emission),
                  ...(data.ranking[0]?.objective.id ? { objective: data.ranking[0].objective.id } : {}),
                  ...(medium === "custom" ? { ri: customRi } : { medium }),
                }).toString()}`}
                data-testid="planner-to-measurement"
              >
                Upload beads embedded in your own medium
              </Link>{" "}
              as a sample measurement and compare the measured depth profile with this prediction.
            </p>
            <p className="mt-1 text-sm">
              <Link
                href={`/planner/print?${new URLSearchParams({
                  objectives: selected.join(","),
                  medium,
                  ...(medium === "custom" ? { ri: customRi } : {}),
                  em: String(emission),
                  depth: String(maxDepth),
                  modality,
                  t: String(temperature),
                }).toString()}`}
                data-testid="planner-print-link"
              >
                One-page summary for printing
              </Link>
            </p>
          </section>
          <div className="grid gap-6 lg:grid-cols-2">
            <section className="card" data-testid="planner-chart-axial">
              <h2>Axial FWHM</h2>
              <Plot
                data={series("axialFwhmUm")}
                layout={{
                  ...baseLayout,
                  height: 320,
                  xaxis: axis("actual depth (µm)"),
                  yaxis: { ...axis("axial FWHM (µm)"), rangemode: "tozero" },
                }}
                config={plotConfig}
                useResizeHandler
                style={{ width: "100%" }}
              />
            </section>
            <section className="card" data-testid="planner-chart-lateral">
              <h2>Lateral FWHM</h2>
              <Plot
                data={series("lateralFwhmUm")}
                layout={{
                  ...baseLayout,
                  height: 320,
                  xaxis: axis("actual depth (µm)"),
                  yaxis: { ...axis("lateral FWHM (µm)"), rangemode: "tozero" },
                }}
                config={plotConfig}
                useResizeHandler
                style={{ width: "100%" }}
              />
            </section>
            <section className="card" data-testid="planner-chart-peak">
              <h2>Peak intensity (relative to an ideal, matched lens)</h2>
              <Plot
                data={series("peakRelative")}
                layout={{
                  ...baseLayout,
                  height: 320,
                  xaxis: axis("actual depth (µm)"),
                  yaxis: { ...axis("relative peak"), range: [0, 1.05] },
                }}
                config={plotConfig}
                useResizeHandler
                style={{ width: "100%" }}
              />
            </section>
            <section className="card" data-testid="planner-chart-focal-shift">
              <h2>Focal shift</h2>
              <Plot
                data={(data.predictions ?? []).map((p, i) => ({
                  name: plotText(p.objective.name),
                  x: p.rows.map((r) => r.depthUm),
                  y: p.rows.map((r) => r.actualDepthUm),
                  mode: "lines",
                  type: "scatter",
                  line: { color: PALETTE[i % PALETTE.length], width: 2 },
                }))}
                layout={{
                  ...baseLayout,
                  height: 320,
                  xaxis: axis("nominal focus travel (µm)"),
                  yaxis: axis("actual depth (µm)"),
                }}
                config={plotConfig}
                useResizeHandler
                style={{ width: "100%" }}
              />
            </section>
          </div>
          <ul className="list-disc pl-5 text-xs text-ink-soft">
            {data.notes.map((n) => (
              <li key={n}>{n}</li>
            ))}
          </ul>
        </>
      ) : null}
    </div>
  );
}
