/**
 * The service-visit report as a PDF (A4, our own plain look): the visit, one small
 * table per objective (baseline with σ and n, as found, as left, limits, result and
 * why), the signed-off report text and the footnote the visit page shows. Drawn with
 * pdf-lib's standard Helvetica, so nothing is fetched or embedded from disk; every
 * string goes through `toWinAnsi` because those fonts only encode WinAnsi. Pure:
 * the same data gives the same bytes (no clock unless `generatedAt` is passed).
 */
import { PDFDocument, StandardFonts, rgb, type PDFFont, type PDFPage, type RGB } from "pdf-lib";
import { toWinAnsi, wrapText } from "./pdf-text";
import { SERVICE_VISIT_FOOTNOTE } from "./service-visit-footnote";

interface RatioPoint {
  acquiredAt: string;
  lateral: number | null;
  axial: number | null;
}

/** What the renderer needs of `getServiceVisitReport`'s answer (that answer fits it). */
export interface ServiceVisitPdfInput {
  visit: {
    title: string;
    startsAt: Date;
    endsAt: Date;
    engineerName: string | null;
    report: string | null;
    signedOffAt: Date | null;
  };
  instruments: Array<{ name: string }>;
  comparisons: Array<{
    objectiveName: string;
    instrumentName: string;
    limits: { lateral: number; axial: number };
    baseline: {
      lateral: number | null;
      axial: number | null;
      sigmaLateral: number | null;
      sigmaAxial: number | null;
      checks: number;
    };
    asFound: RatioPoint | null;
    asLeft: RatioPoint | null;
    verdict: string;
    reason: string;
  }>;
}

export interface ServiceVisitPdfOptions {
  /** When given, printed in the footer and stored as the document's creation date. */
  generatedAt?: Date;
}

const PAGE_W = 595.28; // A4 in points
const PAGE_H = 841.89;
const MARGIN_X = 56;
const MARGIN_TOP = 60;
const MARGIN_BOTTOM = 64; // room for the footer
const CONTENT_W = PAGE_W - 2 * MARGIN_X;

const INK = rgb(0.12, 0.16, 0.2);
const SOFT = rgb(0.4, 0.44, 0.48);
const RULE = rgb(0.8, 0.82, 0.85);
const SHADE = rgb(0.94, 0.95, 0.96);
const VERDICT_COLOUR: Record<string, RGB> = {
  restored: rgb(0.1, 0.45, 0.2),
  "not restored": rgb(0.7, 0.12, 0.12),
  "awaiting as-left check": rgb(0.65, 0.42, 0.05),
  "not checked in this visit": rgb(0.4, 0.44, 0.48),
};

const day = (d: Date | string) => (typeof d === "string" ? new Date(d) : d).toISOString().slice(0, 10);
const num = (x: number | null | undefined, digits = 2) =>
  x == null || !Number.isFinite(x) ? "—" : x.toFixed(digits);

function windowText(startsAt: Date, endsAt: Date): string {
  const a = day(startsAt);
  const b = day(endsAt);
  return `${a === b ? a : `${a} to ${b}`} (UTC dates)`;
}

interface TextStyle {
  font?: PDFFont;
  size?: number;
  color?: RGB;
}

/** Render the visit report; `facilityName` is the facility the visit belongs to. */
export async function renderServiceVisitPdf(
  report: ServiceVisitPdfInput,
  facilityName: string,
  options: ServiceVisitPdfOptions = {},
): Promise<Uint8Array> {
  const { visit, instruments, comparisons } = report;
  const doc = await PDFDocument.create({ updateMetadata: false });
  doc.setTitle(toWinAnsi(`Service visit report: ${visit.title}`));
  doc.setSubject(toWinAnsi(`${facilityName}, ${windowText(visit.startsAt, visit.endsAt)}`));
  doc.setCreator("Beadbench");
  doc.setProducer("Beadbench");
  if (options.generatedAt) doc.setCreationDate(options.generatedAt);
  const regular = await doc.embedFont(StandardFonts.Helvetica);
  const bold = await doc.embedFont(StandardFonts.HelveticaBold);
  const italic = await doc.embedFont(StandardFonts.HelveticaOblique);

  let page: PDFPage = doc.addPage([PAGE_W, PAGE_H]);
  let y = PAGE_H - MARGIN_TOP;

  const newPage = () => {
    page = doc.addPage([PAGE_W, PAGE_H]);
    y = PAGE_H - MARGIN_TOP;
  };
  /** Start a new page unless `height` points still fit on this one. */
  const ensure = (height: number) => {
    if (y - height < MARGIN_BOTTOM) newPage();
  };
  const width = (s: string, { font = regular, size = 10 }: TextStyle = {}) =>
    font.widthOfTextAtSize(toWinAnsi(s), size);
  /** Draw one line with its baseline at `baseline` (no wrapping, no page logic). */
  const draw = (
    s: string,
    x: number,
    baseline: number,
    { font = regular, size = 10, color = INK }: TextStyle = {},
  ) => page.drawText(toWinAnsi(s), { x, y: baseline, font, size, color });
  /** Wrapped text, flowing onto new pages line by line. */
  const paragraph = (s: string, style: TextStyle & { indent?: number; leading?: number } = {}) => {
    const { font = regular, size = 10, indent = 0 } = style;
    const leading = style.leading ?? size * 1.35;
    for (const line of wrapText(toWinAnsi(s), CONTENT_W - indent, (t) => font.widthOfTextAtSize(t, size))) {
      ensure(leading);
      y -= leading;
      if (line) draw(line, MARGIN_X + indent, y, style);
    }
  };
  const rule = (gapAbove = 8, gapBelow = 10) => {
    ensure(gapAbove + gapBelow);
    y -= gapAbove;
    page.drawLine({
      start: { x: MARGIN_X, y },
      end: { x: PAGE_W - MARGIN_X, y },
      thickness: 0.6,
      color: RULE,
    });
    y -= gapBelow;
  };
  const heading = (s: string, size = 12) => {
    ensure(size * 1.6 + 40); // keep a heading with at least a few lines of what follows
    y -= size * 1.6;
    draw(s, MARGIN_X, y, { font: bold, size });
    y -= 4;
  };

  // Title block
  y -= 18;
  draw("Service visit report", MARGIN_X, y, { font: bold, size: 18 });
  y -= 6;
  paragraph(visit.title, { size: 13, leading: 18 });
  y -= 6;
  const facts: Array<[string, string]> = [
    ["Facility", facilityName],
    ["Window", windowText(visit.startsAt, visit.endsAt)],
    ["Engineer", visit.engineerName ?? "not assigned"],
    ["Instruments", instruments.map((i) => i.name).join(", ") || "—"],
    ["Signed off", visit.signedOffAt ? day(visit.signedOffAt) : "not signed off yet"],
  ];
  const labelW = 80;
  for (const [label, value] of facts) {
    const lines = wrapText(toWinAnsi(value), CONTENT_W - labelW, (t) => regular.widthOfTextAtSize(t, 10));
    ensure(14 * lines.length);
    y -= 14;
    draw(label, MARGIN_X, y, { font: bold, size: 9, color: SOFT });
    lines.forEach((line, i) => {
      if (i > 0) y -= 14;
      draw(line, MARGIN_X + labelW, y);
    });
  }
  rule(12, 4);

  // One table per objective
  heading("As found and as left, against each objective's baseline");
  if (comparisons.length === 0) paragraph("No objectives are mounted on these instruments.", { color: SOFT });
  const col = {
    label: MARGIN_X + 6,
    lateralRight: MARGIN_X + 250,
    axialRight: MARGIN_X + 370,
    note: MARGIN_X + 390,
  };
  const rowH = 16;
  for (const c of comparisons) {
    const reasonLines = wrapText(toWinAnsi(c.reason), CONTENT_W, (t) => regular.widthOfTextAtSize(t, 9));
    const blockH = 22 + rowH * 5 + 18 + reasonLines.length * 12 + 14;
    ensure(Math.min(blockH, PAGE_H - MARGIN_TOP - MARGIN_BOTTOM));
    y -= 22;
    draw(c.objectiveName, MARGIN_X, y, { font: bold, size: 11 });
    draw(`  on ${c.instrumentName}`, MARGIN_X + width(c.objectiveName, { font: bold, size: 11 }), y, {
      size: 9.5,
      color: SOFT,
    });
    y -= 6;
    const sigma = (s: number | null) => (s != null ? ` (σ ${num(s, 3)})` : "");
    const rows: Array<{ cells: [string, string, string, string]; header?: boolean }> = [
      { cells: ["", "Lateral (× theory)", "Axial (× theory)", ""], header: true },
      {
        cells: [
          "Baseline",
          `${num(c.baseline.lateral)}${sigma(c.baseline.sigmaLateral)}`,
          `${num(c.baseline.axial)}${sigma(c.baseline.sigmaAxial)}`,
          `n = ${c.baseline.checks} check${c.baseline.checks === 1 ? "" : "s"}`,
        ],
      },
      {
        cells: [
          "As found",
          num(c.asFound?.lateral),
          num(c.asFound?.axial),
          c.asFound ? day(c.asFound.acquiredAt) : "no check",
        ],
      },
      {
        cells: [
          "As left",
          num(c.asLeft?.lateral),
          num(c.asLeft?.axial),
          c.asLeft ? day(c.asLeft.acquiredAt) : "no check yet",
        ],
      },
      { cells: ["Limit (below)", num(c.limits.lateral), num(c.limits.axial), ""] },
    ];
    for (const row of rows) {
      ensure(rowH);
      if (row.header)
        page.drawRectangle({ x: MARGIN_X, y: y - rowH, width: CONTENT_W, height: rowH, color: SHADE });
      y -= rowH;
      const base = y + 5;
      const style: TextStyle = row.header ? { font: bold, size: 8.5, color: SOFT } : { size: 9.5 };
      const [label, lateral, axial, note] = row.cells;
      draw(label, col.label, base, row.header ? style : { font: bold, size: 9.5 });
      draw(lateral, col.lateralRight - width(lateral, style), base, style);
      draw(axial, col.axialRight - width(axial, style), base, style);
      draw(note, col.note, base, row.header ? style : { size: 9, color: SOFT });
      page.drawLine({
        start: { x: MARGIN_X, y },
        end: { x: PAGE_W - MARGIN_X, y },
        thickness: 0.4,
        color: RULE,
      });
    }
    ensure(18);
    y -= 16;
    draw("Result:", MARGIN_X, y, { font: bold, size: 10 });
    draw(c.verdict, MARGIN_X + width("Result: ", { font: bold }), y, {
      font: bold,
      size: 10,
      color: VERDICT_COLOUR[c.verdict] ?? INK,
    });
    paragraph(c.reason, { size: 9, leading: 12, color: SOFT });
  }

  // The engineer's report
  rule(14, 4);
  heading("Report");
  if (visit.signedOffAt && visit.report) {
    paragraph(visit.report, { size: 10 });
    y -= 4;
    paragraph(`Signed off on ${day(visit.signedOffAt)}.`, { size: 9, color: SOFT });
  } else {
    paragraph("Not signed off yet: the engineer's report appears here once the visit is signed off.", {
      font: italic,
      color: SOFT,
    });
  }

  // Footnote
  rule(14, 2);
  paragraph(SERVICE_VISIT_FOOTNOTE, { size: 8.5, leading: 11, color: SOFT });

  // Footer on every page
  const pages = doc.getPages();
  const generated = options.generatedAt
    ? ` · generated ${options.generatedAt.toISOString().slice(0, 16).replace("T", " ")} UTC`
    : "";
  pages.forEach((p, i) => {
    const right = `Page ${i + 1} of ${pages.length}`;
    const rightW = regular.widthOfTextAtSize(right, 8);
    let left = toWinAnsi(`Beadbench · ${facilityName} · ${visit.title}${generated}`);
    while (left.length > 1 && regular.widthOfTextAtSize(left, 8) > CONTENT_W - rightW - 16)
      left = `${left.slice(0, -2)}…`;
    p.drawLine({
      start: { x: MARGIN_X, y: 44 },
      end: { x: PAGE_W - MARGIN_X, y: 44 },
      thickness: 0.4,
      color: RULE,
    });
    p.drawText(left, { x: MARGIN_X, y: 32, font: regular, size: 8, color: SOFT });
    p.drawText(right, { x: PAGE_W - MARGIN_X - rightW, y: 32, font: regular, size: 8, color: SOFT });
  });

  return doc.save();
}

/** The download name: `visit-<first day>.pdf`. */
export function serviceVisitPdfFileName(startsAt: Date): string {
  return `visit-${day(startsAt)}.pdf`;
}
