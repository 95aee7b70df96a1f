"use client";
import type { ChannelCoregistrationView, TrendView } from "@/hooks/use-measurement";

function nm(um: number | null | undefined, d = 0) {
  return um == null || !Number.isFinite(um) ? "—" : (um * 1000).toFixed(d);
}

function ratio(x: number | null) {
  return x == null || !Number.isFinite(x) ? "—" : x.toFixed(2);
}

/** Slope of a shift against depth, nm per µm of depth, with its interval. */
function slope(t: TrendView) {
  if (t.slope == null) return "—";
  const s = `${(t.slope * 1000).toFixed(1)}`;
  return t.slopeLow != null && t.slopeHigh != null
    ? `${s} (${(t.slopeLow * 1000).toFixed(1)} to ${(t.slopeHigh * 1000).toFixed(1)})`
    : s;
}

/** Plain verdict: each shift against the resolution in its direction (shift/resolution < 1). */
function verdict(c: ChannelCoregistrationView): { text: string; tone: string } {
  if (c.lateralRatio == null || c.axialRatio == null) return { text: "no pairs", tone: "text-ink-soft" };
  const beyond = [c.lateralRatio >= 1 ? "laterally" : null, c.axialRatio >= 1 ? "axially" : null].filter(
    Boolean,
  );
  return beyond.length
    ? { text: `beyond the resolution ${beyond.join(" and ")}`, tone: "text-bad" }
    : { text: "within the resolution", tone: "text-good" };
}

/**
 * "Between channels": the chromatic shift of each other channel against the measurement's
 * channel, per ISO 21073 as quoted by NBO (QC-PRACTICE.md §4.1), judged by the common-practice
 * rule shift/resolution < 1 (QC-PRACTICE.md §2).
 */
export function CoregistrationCard({ pairs }: { pairs: ChannelCoregistrationView[] }) {
  const notes: string[] = [];
  for (const c of pairs) {
    const label = `Channel ${c.testChannel}`;
    if (c.reason) notes.push(`${label}: ${c.reason}`);
    else if (c.pairCount < 0.5 * Math.min(c.referenceBeads, c.testBeads))
      notes.push(
        `${label}: only ${c.pairCount} of ${Math.min(c.referenceBeads, c.testBeads)} beads matched within ${nm(c.toleranceUm)} nm; shifts larger than that, or beads seen in one channel only, are not counted.`,
      );
  }
  const borrowed = pairs.filter((c) => !c.reason && c.testWavelengthSource === "measurement");
  if (borrowed.length)
    notes.push(
      `The file gives no wavelength for channel ${borrowed.map((c) => c.testChannel).join(", ")}, so its beads were fitted with the expected widths for ${borrowed[0]!.testEmissionWavelengthNm} nm: an approximation that sizes the fitting windows, not the shifts' definition.`,
    );
  return (
    <section className="card" data-testid="coregistration-card">
      <h2 className="mb-1">Between channels</h2>
      <p className="mb-2 text-xs text-ink-soft">
        The same beads located in each channel. Lateral shift √(Δx² + Δy²) and axial shift |Δz| are medians
        over the matched beads (ISO 21073 definitions as quoted by the 4DN-BINA-OME schema), compared with the
        theoretical FWHM of channel {pairs[0]?.referenceChannel} (the measurement&apos;s channel); a ratio
        below 1 — within the resolution — is common practice. The standard takes a bead at the centre of the
        field; these medians cover every matched bead, and lateral chromatic shift grows away from the centre.
        Channels are counted from 0; z is focus travel.
      </p>
      <div className="overflow-x-auto">
        <table className="data-table">
          <thead>
            <tr>
              <th>Channels</th>
              <th className="num">Pairs</th>
              <th className="num">Lateral shift (nm)</th>
              <th className="num">Axial shift (nm)</th>
              <th className="num">Lateral / resolution</th>
              <th className="num">Axial / resolution</th>
              <th>Verdict</th>
              <th className="num">Δz vs depth (nm/µm)</th>
            </tr>
          </thead>
          <tbody>
            {pairs.map((c) => {
              const v = verdict(c);
              return (
                <tr key={`${c.referenceChannel}-${c.testChannel}`}>
                  <td>
                    {c.referenceChannel} → {c.testChannel}
                    <div className="text-xs text-ink-soft">
                      Δx {nm(c.medianDxUm)}, Δy {nm(c.medianDyUm)}, Δz {nm(c.medianDzUm)} nm
                    </div>
                  </td>
                  <td className="num">{c.pairCount}</td>
                  <td className="num">{nm(c.medianLateralUm)}</td>
                  <td className="num">{nm(c.medianAxialUm)}</td>
                  <td className="num">
                    {ratio(c.lateralRatio)}
                    <div className="text-xs text-ink-soft">of {nm(c.resolutionUm.lateral)} nm</div>
                  </td>
                  <td className="num">
                    {ratio(c.axialRatio)}
                    <div className="text-xs text-ink-soft">of {nm(c.resolutionUm.axial)} nm</div>
                  </td>
                  <td className={v.tone}>{v.text}</td>
                  <td className="num">{slope(c.dzVsDepth)}</td>
                </tr>
              );
            })}
          </tbody>
        </table>
      </div>
      <p className="mt-2 text-xs text-ink-soft">
        Δx, Δy, Δz are signed (other channel minus the measurement&apos;s). The depth slope is a Theil–Sen fit
        with its 95 % interval; a slope away from 0 means the focal offset between colours changes with depth,
        as it does in dispersive media.
      </p>
      {notes.length ? (
        <ul className="mt-2 list-disc pl-5 text-xs text-watch">
          {notes.map((n) => (
            <li key={n}>{n}</li>
          ))}
        </ul>
      ) : null}
    </section>
  );
}
